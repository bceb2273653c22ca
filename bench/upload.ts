// The upload pipeline timed stage by stage for `npm run bench` (parse, validate, insert, calibrate).
import crypto from "node:crypto";
import type { Db } from "#app/db/client.server.ts";
import { uploadBatches } from "#app/db/schema.ts";
import { userLab } from "#app/models/submission/uploads/batches.server.ts";
import { commitUpload } from "#app/models/submission/uploads/commit.server.ts";
import { guessMapping } from "#app/models/submission/uploads/mapping.server.ts";
import { readUpload } from "#app/models/submission/uploads/read-sheet.server.ts";
import { validateRows } from "#app/models/submission/uploads/validate.server.ts";

export type UploadBench = {
  rows: number;
  parseMs: number;
  validateMs: number;
  insertMs: number;
  calibrateMs: number;
  totalMs: number;
};

/**
 * Times one file through the whole path — read, validate (with the mapping guessed), write and
 * calibrate — as the upload page and the API run it. Writes to `db` as `userId`.
 */
export async function benchUpload(db: Db, file: Buffer, kind: "csv" | "xlsx", userId: number): Promise<UploadBench> {
  const t0 = performance.now();
  const sheet = await readUpload(file, `bench.${kind}`);
  const t1 = performance.now();
  const mapping = guessMapping(sheet.headers);
  const labId = userLab(db, userId);
  const validation = validateRows(db, sheet, mapping, { userId, userLabId: labId });
  const t2 = performance.now();
  const batch = db
    .insert(uploadBatches)
    .values({
      publicId: crypto.randomBytes(12).toString("base64url"),
      userId,
      labId,
      fileName: `bench.${kind}`,
      fileKind: kind,
      fileSizeBytes: file.length,
      mapping,
      rowCount: validation.results.length,
      validCount: validation.validCount,
      errors: validation.errors,
      payload: [{ n: sheet.headerRow, cells: sheet.headers, notices: [] }, ...sheet.rows],
    })
    .returning()
    .get();
  const timings: { insertMs?: number; calibrateMs?: number } = {};
  const t3 = performance.now();
  commitUpload(db, batch, "valid_only", { userId }, { timings });
  const t4 = performance.now();
  // commitUpload validates again before writing; count that with validation, not with the writes.
  const revalidateMs = t4 - t3 - (timings.insertMs ?? 0) - (timings.calibrateMs ?? 0);
  return {
    rows: validation.results.length,
    parseMs: t1 - t0,
    validateMs: t2 - t1 + revalidateMs,
    insertMs: timings.insertMs ?? 0,
    calibrateMs: timings.calibrateMs ?? 0,
    totalMs: t4 - t0,
  };
}

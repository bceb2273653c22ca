// The upload pipeline timed stage by stage for `npm run bench` (parse, validate, insert, calibrate).
import crypto from "node:crypto";
import ExcelJS from "exceljs";
import type { Db } from "#app/db/client.server.ts";
import { uploadBatches } from "#app/db/schema.ts";
import { userLab } from "#app/models/submission/uploads/batches.server.ts";
import { commitUpload } from "#app/models/submission/uploads/commit.server.ts";
import { guessMapping } from "#app/models/submission/uploads/mapping.server.ts";
import { readUpload } from "#app/models/submission/uploads/read-sheet.server.ts";
import { validateRows } from "#app/models/submission/uploads/validate.server.ts";
import { radiocarbonSheetRows, seconds, SHEET_HEADERS, type BenchSection } from "./support.ts";

export type UploadBench = {
  rows: number;
  parseMs: number;
  validateMs: number;
  insertMs: number;
  calibrateMs: number;
  /** Of calibrateMs, the checks run on the new rows. */
  checksMs: number;
  /** How long the commit held the write lock (BEGIN IMMEDIATE to COMMIT), wall and CPU. */
  lockMs: number;
  /** The whole commitUpload call (validating again, then the transaction), wall and CPU. */
  commitMs: number;
  commitCpuMs: number;
  totalMs: number;
};

/**
 * Times one file through the whole path — read, validate (with the mapping guessed), write and
 * calibrate — as the upload page and the API run it. Writes to `db` as `userId`.
 */
async function benchUpload(db: Db, file: Buffer, kind: "csv" | "xlsx", userId: number): Promise<UploadBench> {
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
  const timings: { insertMs?: number; calibrateMs?: number; checksMs?: number; lockMs?: number } = {};
  const t3 = performance.now();
  const c3 = process.cpuUsage();
  commitUpload(db, batch, "valid_only", { userId }, { timings });
  const c4 = process.cpuUsage(c3);
  const t4 = performance.now();
  // commitUpload validates again before writing; count that with validation, not with the writes.
  const revalidateMs = t4 - t3 - (timings.insertMs ?? 0) - (timings.calibrateMs ?? 0);
  return {
    rows: validation.results.length,
    parseMs: t1 - t0,
    validateMs: t2 - t1 + revalidateMs,
    insertMs: timings.insertMs ?? 0,
    calibrateMs: timings.calibrateMs ?? 0,
    checksMs: timings.checksMs ?? 0,
    lockMs: timings.lockMs ?? t4 - t3,
    commitMs: t4 - t3,
    commitCpuMs: (c4.user + c4.system) / 1000,
    totalMs: t4 - t0,
  };
}

/** 5,500 invented radiocarbon rows, a third of them marine, at one demo lab. */
function sheetRows(tag: string, lab: { name: string; code_prefix: string }) {
  return radiocarbonSheetRows({
    count: 5500,
    tag,
    place: "Bench Cove",
    sites: 400,
    samplePrefix: "BN",
    labCodePrefix: `${lab.code_prefix}-B`,
    labName: lab.name,
  });
}

export const bench: BenchSection = {
  name: "upload",
  about: "a 5,500-row sheet as XLSX and as CSV through parse, validate, write and calibrate",
  async run({ db, report, userId }) {
    console.log("Uploading a 5,500-row sheet as XLSX and as CSV…");
    const lab = db.$client.prepare("select name, code_prefix from labs limit 1").get() as { name: string; code_prefix: string };
    const wb = new ExcelJS.Workbook();
    const ws = wb.addWorksheet("determinations");
    ws.addRow(SHEET_HEADERS);
    for (const r of sheetRows("X", lab)) ws.addRow(r);
    const xlsx = Buffer.from(await wb.xlsx.writeBuffer());
    const csv = Buffer.from([SHEET_HEADERS.join(","), ...sheetRows("C", lab).map((r) => r.join(","))].join("\n"));
    const contributor = userId("contributor@example.org");
    for (const [kind, file] of [
      ["xlsx", xlsx],
      ["csv", csv],
    ] as const) {
      const b = await benchUpload(db, file, kind, contributor);
      report(`upload ${kind}`, `${b.rows} rows: parse`, seconds(b.parseMs));
      report(`upload ${kind}`, "validate", seconds(b.validateMs));
      report(`upload ${kind}`, "commit (write)", seconds(b.insertMs));
      report(`upload ${kind}`, "calibrate and check", seconds(b.calibrateMs));
      report(`upload ${kind}`, "  of which checks", seconds(b.checksMs));
      report(`upload ${kind}`, "commit: write lock held / whole commit", `${seconds(b.lockMs)} / ${seconds(b.commitMs)}`);
      report(`upload ${kind}`, "commit: CPU", seconds(b.commitCpuMs));
      report(`upload ${kind}`, "end to end", seconds(b.totalMs), kind === "xlsx" ? "≤ 5 s" : undefined);
    }
  },
};

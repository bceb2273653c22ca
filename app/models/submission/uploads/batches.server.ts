// Upload batches: storing a parsed and validated file, remapping it, and listing a contributor's uploads.
// Nothing reaches sites/samples/determinations before a commit.

import crypto from "node:crypto";
import { readFile } from "node:fs/promises";
import { and, desc, eq, sql } from "drizzle-orm";
import type { Db } from "#app/db/client.server.ts";
import { labs, uploadBatches, users } from "#app/db/schema.ts";
import { columnSpec } from "#app/utils/determination-input/columns.ts";
import { CommitRefused } from "#app/models/submission/uploads/commit.server.ts";
import { type ColumnMapping, guessMapping } from "#app/models/submission/uploads/mapping.server.ts";
import { type PayloadHead, type StoredRow, readUpload } from "#app/models/submission/uploads/read-sheet.server.ts";
import { undoRefusals } from "#app/models/submission/uploads/undo.server.ts";
import { type Validation, validateRows } from "#app/models/submission/uploads/validate.server.ts";

export type BatchRow = typeof uploadBatches.$inferSelect;

export function userLab(db: Db, userId: number): number | null {
  return db.select({ labId: users.labId }).from(users).where(eq(users.id, userId)).get()?.labId ?? null;
}

function rememberedMapping(db: Db, labId: number | null): ColumnMapping | null {
  if (labId == null) return null;
  return db.select({ m: labs.lastMapping }).from(labs).where(eq(labs.id, labId)).get()?.m ?? null;
}

export function sheetOf(batch: BatchRow): { head: PayloadHead; headers: string[]; rows: StoredRow[] } {
  const payload = (batch.payload ?? []) as StoredRow[];
  const head = (payload[0] ?? { n: 1, cells: [], notices: [] }) as PayloadHead;
  return { head, headers: head.cells.map((c) => String(c ?? "")), rows: payload.slice(1) };
}

/**
 * Reads, maps and validates an upload and stores it as a batch with status "parsed".
 * Nothing is written to the registry. File-level problems throw UploadError.
 */
export async function createUpload(
  db: Db,
  input: { userId: number; fileName: string } & ({ file: Buffer } | { path: string }),
): Promise<{ batch: BatchRow; validation: Validation }> {
  const file = "file" in input ? input.file : await readFile(input.path);
  const sheet = await readUpload(file, input.fileName);
  const labId = userLab(db, input.userId);
  const mapping = guessMapping(sheet.headers, rememberedMapping(db, labId));
  const validation = validateRows(db, sheet, mapping, { userId: input.userId, userLabId: labId });
  const head: PayloadHead = {
    n: sheet.headerRow,
    cells: sheet.headers,
    notices: [...sheet.notices, ...validation.notices],
    warnings: validation.warnings,
    preview: validation.preview,
  };
  const batch = db
    .insert(uploadBatches)
    .values({
      publicId: crypto.randomBytes(12).toString("base64url"),
      userId: input.userId,
      labId,
      fileName: input.fileName.slice(0, 200) || "upload",
      fileKind: sheet.kind,
      fileSizeBytes: file.length,
      status: "parsed",
      mapping,
      rowCount: validation.results.length,
      validCount: validation.validCount,
      errors: validation.errors,
      payload: [head, ...sheet.rows],
    })
    .returning()
    .get();
  return { batch, validation };
}

/** Validates a parsed batch again with a new mapping, stores the result, and remembers the mapping for the lab. */
export function remapUpload(db: Db, batch: BatchRow, mapping: ColumnMapping): Validation {
  if (batch.status !== "parsed") throw new CommitRefused("This upload is already committed; its mapping cannot change.");
  const { head, headers, rows } = sheetOf(batch);
  const clean: ColumnMapping = {};
  const taken = new Set<string>();
  for (const h of headers) {
    const col = mapping[h] ?? "";
    if (col && columnSpec(col) && !taken.has(col)) {
      clean[h] = col;
      taken.add(col);
    } else clean[h] = "";
  }
  const labId = batch.labId ?? userLab(db, batch.userId);
  const validation = validateRows(db, { headers, rows }, clean, { userId: batch.userId, userLabId: labId });
  const readerNotices = head.notices.filter((n) => !n.startsWith("No column is mapped"));
  const newHead: PayloadHead = {
    ...head,
    notices: [...readerNotices, ...validation.notices],
    warnings: validation.warnings,
    preview: validation.preview,
  };
  db.transaction((tx) => {
    tx.update(uploadBatches)
      .set({
        mapping: clean,
        errors: validation.errors,
        rowCount: validation.results.length,
        validCount: validation.validCount,
        payload: [newHead, ...rows],
      })
      .where(eq(uploadBatches.id, batch.id))
      .run();
    if (labId != null) tx.update(labs).set({ lastMapping: clean }).where(eq(labs.id, labId)).run();
  });
  return validation;
}

export function getBatchById(db: Db, id: number): BatchRow | undefined {
  return db.select().from(uploadBatches).where(eq(uploadBatches.id, id)).get();
}

export function getBatchForUser(db: Db, publicId: string, userId: number): BatchRow | undefined {
  return db
    .select()
    .from(uploadBatches)
    .where(and(eq(uploadBatches.publicId, publicId), eq(uploadBatches.userId, userId)))
    .get();
}

export type BatchSummary = Omit<BatchRow, "payload" | "errors" | "mapping"> & {
  userName: string;
  errorCount: number;
  undoable: boolean;
  /** Why a committed batch can no longer be undone (the undo's own rule). */
  undoRefusal: string | null;
};

/** A contributor's upload history, newest first, with whether each batch can still be undone. */
export function listBatches(db: Db, userId: number, limit = 100): BatchSummary[] {
  const rows = db
    .select({
      id: uploadBatches.id,
      publicId: uploadBatches.publicId,
      userId: uploadBatches.userId,
      labId: uploadBatches.labId,
      fileName: uploadBatches.fileName,
      fileKind: uploadBatches.fileKind,
      fileSizeBytes: uploadBatches.fileSizeBytes,
      status: uploadBatches.status,
      rowCount: uploadBatches.rowCount,
      validCount: uploadBatches.validCount,
      committedCount: uploadBatches.committedCount,
      createdAt: uploadBatches.createdAt,
      committedAt: uploadBatches.committedAt,
      undoneAt: uploadBatches.undoneAt,
      userName: users.name,
      errorCount: sql<number>`coalesce(json_array_length(${uploadBatches.errors}), 0)`,
    })
    .from(uploadBatches)
    .innerJoin(users, eq(users.id, uploadBatches.userId))
    .where(eq(uploadBatches.userId, userId))
    .orderBy(desc(uploadBatches.createdAt), desc(uploadBatches.id))
    .limit(limit)
    .all();
  const refusals = undoRefusals(
    db,
    rows.filter((r) => r.status === "committed").map((r) => r.id),
  );
  return rows.map((r) => ({
    ...r,
    undoable: r.status === "committed" && !refusals.has(r.id),
    undoRefusal: refusals.get(r.id) ?? null,
  }));
}

export type CreatedDetermination = {
  id: number;
  labCode: string;
  method: string;
  siteName: string;
  medianCalBp: number | null;
  hpd95FromBp: number | null;
  hpd95ToBp: number | null;
};

/** What a committed batch created: its determinations with their current calendar ages, in file order. */
export function batchDeterminations(db: Db, batchId: number, limit = 500): { rows: CreatedDetermination[]; total: number } {
  const rows = db.$client
    .prepare(
      `select d.id, d.lab_code as labCode, d.method, s.name as siteName, c.median_cal_bp as medianCalBp,
              c.hpd95_from_bp as hpd95FromBp, c.hpd95_to_bp as hpd95ToBp
       from determinations d
       join samples m on m.id = d.sample_id join sites s on s.id = m.site_id
       left join calibrations c on c.determination_id = d.id and c.is_current = 1
       where d.upload_batch_id = ? order by d.id limit ?`,
    )
    .all(batchId, limit) as CreatedDetermination[];
  const total = db.$client
    .prepare("select count(*) from determinations where upload_batch_id = ?")
    .pluck()
    .get(batchId) as number;
  return { rows, total };
}

// Committing a batch (all rows, or only the valid ones) and the API's JSON rows: one transaction with
// the sites, samples, determinations, their audit entries and calibration.

import crypto from "node:crypto";
import { eq } from "drizzle-orm";
import { runChecksFor } from "#app/models/review/check-run.server.ts";
import type { Db } from "#app/db/client.server.ts";
import { labs, uploadBatches, type UploadRowError } from "#app/db/schema.ts";
import { audit } from "#app/models/audit.server.ts";
import { groupThousands } from "#app/science/calendar.ts";
import { calibrateDeterminations } from "#app/models/calibration/calibrations.server.ts";
import { determinationValues, insertDetermination } from "#app/models/submission/determinations.server.ts";
import { COLUMNS, columnSpec } from "#app/utils/determination-input/columns.ts";
import { type BatchRow, sheetOf, userLab } from "#app/models/submission/uploads/batches.server.ts";
import type { StoredCell, StoredRow } from "#app/models/submission/uploads/read-sheet.server.ts";
import { type Validation, validateRows } from "#app/models/submission/uploads/validate.server.ts";

/** A commit refused as a whole (mode "all" with errors, nothing valid, already committed). */
export class CommitRefused extends Error {
  constructor(
    message: string,
    public status = 409,
  ) {
    super(message);
  }
}

export type CommitMode = "all" | "valid_only";

/**
 * Commits take the write lock when they begin (BEGIN IMMEDIATE). A deferred transaction reads first
 * and asks for the lock at its first write; if the server's thread wrote anything meanwhile (a
 * session, a rate-limit counter), SQLite refuses that upgrade at once ("database is locked",
 * SQLITE_BUSY_SNAPSHOT: no wait helps), and the whole commit failed.
 */
const IMMEDIATE = { behavior: "immediate" } as const;

export type CommitOptions = {
  /** Called after each determination is written; a test throws here to prove the rollback. */
  afterRow?: (i: number) => void;
  /** Told what the commit is doing (rows written so far): progress for a page to show. */
  onPhase?: (message: string, done: number) => void;
  /** Filled with the milliseconds spent writing rows, calibrating and checking, and holding the write lock, for the bench. */
  timings?: { insertMs?: number; calibrateMs?: number; checksMs?: number; lockMs?: number };
  ip?: string | null;
};

export type CommitResult = {
  committed: number;
  determinationIds: number[];
  createdSiteIds: number[];
  createdSampleIds: number[];
};

/**
 * Writes the valid rows where their plans put them; the caller holds the transaction (better-sqlite3
 * runs the nested transactions of insertDetermination as savepoints on the same connection): labs,
 * publications, sites and samples as needed, each determination with its audit row, then their
 * calibrations and checks. Anything that throws rolls the whole commit back.
 */
function writeRows(
  db: Db,
  validation: Validation,
  ctx: { userId: number; batchId: number },
  options: CommitOptions,
): CommitResult {
  const t0 = performance.now();
  const createdSiteIds: number[] = [];
  const createdSampleIds: number[] = [];
  const ids: number[] = [];
  const plans = validation.results.flatMap((r) => (r.plan ? [r.plan] : []));
  plans.forEach((plan, i) => {
    const placed = validation.placement.place(plan, { batchId: ctx.batchId, ip: options.ip });
    if (placed.createdSite) createdSiteIds.push(placed.siteId);
    if (placed.createdSample) createdSampleIds.push(placed.sampleId);
    const det = insertDetermination(
      db,
      {
        sampleId: placed.sampleId,
        labId: placed.labId,
        ...determinationValues(plan.row),
        status: "submitted",
        contributorId: ctx.userId,
        publicationId: placed.publicationId,
        uploadBatchId: ctx.batchId,
      },
      ctx.userId,
    );
    ids.push(det.id);
    options.afterRow?.(i);
  });
  const t1 = performance.now();
  options.onPhase?.(`Calibrating and checking ${groupThousands(ids.length)} determinations`, ids.length);
  calibrateDeterminations(db, ids);
  const tc = performance.now();
  runChecksFor(db, ids);
  const t2 = performance.now();
  if (options.timings) {
    options.timings.insertMs = t1 - t0;
    options.timings.calibrateMs = t2 - t1;
    options.timings.checksMs = t2 - tc;
  }
  return { committed: ids.length, determinationIds: ids, createdSiteIds, createdSampleIds };
}

/**
 * Commits a parsed batch. The rows are validated again first (the registry may have changed
 * since the upload): mode "all" with any error is refused (409) and writes nothing.
 */
export function commitUpload(
  db: Db,
  batch: BatchRow,
  mode: CommitMode,
  actor: { userId: number },
  options: CommitOptions = {},
): CommitResult {
  if (batch.userId !== actor.userId) throw new CommitRefused("Not found.", 404);
  if (batch.status !== "parsed") throw new CommitRefused(`This upload is ${batch.status}; it cannot be committed again.`);
  const { headers, rows } = sheetOf(batch);
  const labId = batch.labId ?? userLab(db, batch.userId);
  const validate = () => validateRows(db, { headers, rows }, batch.mapping ?? {}, { userId: actor.userId, userLabId: labId });
  // The rows are checked again (the registry may have changed since the upload was read) before the
  // write lock is taken, so the lock is held only while writing: others' writes wait that much less.
  // data_version changes when another connection commits; then they are checked once more, under the lock.
  const dataVersion = () => db.$client.pragma("data_version", { simple: true }) as number;
  const seen = dataVersion();
  options.onPhase?.("Checking the rows again", 0);
  let validation = validate();
  const lockedAt = performance.now();
  const written = db.transaction((tx) => {
    if (dataVersion() !== seen) {
      options.onPhase?.("Checking the rows again (the registry changed meanwhile)", 0);
      validation = validate();
    }
    if (mode === "all" && validation.errors.length > 0) {
      throw new CommitRefused(
        `The file has ${validation.errors.length} error${validation.errors.length === 1 ? "" : "s"} in ${validation.results.length - validation.validCount} row(s); fix them or commit the valid rows only.`,
      );
    }
    if (validation.validCount === 0) throw new CommitRefused("No row is valid; nothing to commit.", 400);
    const result = writeRows(db, validation, { userId: actor.userId, batchId: batch.id }, options);
    tx.update(uploadBatches)
      .set({
        status: "committed",
        committedAt: new Date(),
        committedCount: result.committed,
        errors: validation.errors,
        validCount: validation.validCount,
      })
      .where(eq(uploadBatches.id, batch.id))
      .run();
    if (labId != null && batch.mapping) tx.update(labs).set({ lastMapping: batch.mapping }).where(eq(labs.id, labId)).run();
    audit(tx, {
      actorId: actor.userId,
      action: "upload.commit",
      entity: "upload_batch",
      entityId: batch.publicId,
      after: {
        mode,
        committed: result.committed,
        skippedRows: validation.results.length - validation.validCount,
        createdSiteIds: result.createdSiteIds,
        createdSampleIds: result.createdSampleIds,
      },
      ip: options.ip,
    });
    return result;
  }, IMMEDIATE);
  if (options.timings) options.timings.lockMs = performance.now() - lockedAt;
  return written;
}

/** A problem or warning of one item sent to the API: index from 0, row from 1. */
export type ApiRowIssue = UploadRowError & { index: number };

/** Rows sent as JSON to the API: all valid → committed as one batch of kind json; else errors and nothing written. */
export function submitJsonRows(
  db: Db,
  items: unknown[],
  actor: { userId: number },
  options: CommitOptions = {},
):
  | { ok: true; determinationIds: number[]; warnings: ApiRowIssue[] }
  | { ok: false; errors: ApiRowIssue[]; warnings: ApiRowIssue[] } {
  const headers = COLUMNS.map((c) => c.name);
  const errors: (UploadRowError & { index: number })[] = [];
  const rows: StoredRow[] = items.map((item, i) => {
    if (!item || typeof item !== "object" || Array.isArray(item)) {
      errors.push({ index: i, row: i + 1, column: "", message: "Each item must be an object whose keys are column names." });
      return { n: i + 1, cells: [] };
    }
    const obj = item as Record<string, unknown>;
    for (const key of Object.keys(obj)) {
      if (!columnSpec(key)) errors.push({ index: i, row: i + 1, column: key, message: `Unknown field "${key}".` });
    }
    return {
      n: i + 1,
      cells: headers.map((h): StoredCell => {
        const v = obj[h];
        if (v == null) return null;
        if (typeof v === "string" || typeof v === "number" || typeof v === "boolean") return v;
        return JSON.stringify(v);
      }),
    };
  });
  const labId = userLab(db, actor.userId);
  const mapping = Object.fromEntries(headers.map((h) => [h, h]));
  // Index rows from 1 so a blank object still gets its row number back.
  const validation = validateRows(db, { headers, rows }, mapping, { userId: actor.userId, userLabId: labId });
  for (const r of rows) {
    if (r.cells.length > 0 && !validation.results.some((v) => v.n === r.n)) {
      errors.push({ index: r.n - 1, row: r.n, column: "", message: "The item is empty." });
    }
  }
  for (const e of validation.errors) errors.push({ index: e.row - 1, ...e });
  const warnings = validation.warnings.map((w) => ({ index: w.row - 1, ...w }));
  if (errors.length > 0) {
    errors.sort((a, b) => a.index - b.index);
    return { ok: false, errors, warnings };
  }
  return db.transaction((tx) => {
    const batch = tx
      .insert(uploadBatches)
      .values({
        publicId: crypto.randomBytes(12).toString("base64url"),
        userId: actor.userId,
        labId,
        fileName: "API submission",
        fileKind: "json",
        fileSizeBytes: 0,
        status: "committed",
        mapping,
        rowCount: validation.validCount,
        validCount: validation.validCount,
        committedCount: validation.validCount,
        errors: [],
        payload: [],
        committedAt: new Date(),
      })
      .returning()
      .get();
    const result = writeRows(db, validation, { userId: actor.userId, batchId: batch.id }, options);
    audit(tx, {
      actorId: actor.userId,
      action: "upload.commit",
      entity: "upload_batch",
      entityId: batch.publicId,
      after: {
        mode: "api",
        committed: result.committed,
        createdSiteIds: result.createdSiteIds,
        createdSampleIds: result.createdSampleIds,
      },
      ip: options.ip,
    });
    return { ok: true as const, determinationIds: result.determinationIds, warnings };
  }, IMMEDIATE);
}

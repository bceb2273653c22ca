// Committing a batch (all rows, or only the valid ones) and the API's JSON rows: one transaction with
// the sites, samples, determinations, their audit entries and calibration.

import crypto from "node:crypto";
import { eq } from "drizzle-orm";
import { runChecksFor } from "#app/models/review/check-run.server.ts";
import type { Db } from "#app/db/client.server.ts";
import { labs, publications, samples, sites, uploadBatches, type UploadRowError } from "#app/db/schema.ts";
import { audit } from "#app/models/audit.server.ts";
import { calibrateDeterminations } from "#app/models/calibration/calibrations.server.ts";
import {
  determinationValues,
  insertDetermination,
  sampleValues,
  siteValues,
} from "#app/models/submission/determinations.server.ts";
import { COLUMNS, columnSpec } from "#app/utils/determination-input/columns.ts";
import type { DeterminationRow } from "#app/utils/determination-input/row.ts";
import { type BatchRow, sheetOf, userLab } from "#app/models/submission/uploads/batches.server.ts";
import type { StoredCell, StoredRow } from "#app/models/submission/uploads/read-sheet.server.ts";
import {
  type Registry,
  type SiteRef,
  findSite,
  loadSitesByName,
  resolveLab,
  validateRows,
} from "#app/models/submission/uploads/validate.server.ts";

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

export type CommitOptions = {
  /** Called after each determination is written; a test throws here to prove the rollback. */
  afterRow?: (i: number) => void;
  /** Filled with the milliseconds spent writing rows and calibrating, for the bench. */
  timings?: { insertMs?: number; calibrateMs?: number };
  ip?: string | null;
};

export type CommitResult = {
  committed: number;
  determinationIds: number[];
  createdSiteIds: number[];
  createdSampleIds: number[];
};

/**
 * Writes valid rows to the registry; the caller holds the transaction (better-sqlite3 runs the
 * nested transactions of insertDetermination as savepoints on the same connection): labs, publications, sites and samples
 * as needed, each determination with its audit row, then their calibrations. Anything that
 * throws rolls the whole commit back.
 */
function writeRows(
  db: Db,
  rows: DeterminationRow[],
  ctx: { userId: number; batchId: number; userLabId: number | null },
  options: CommitOptions,
): CommitResult {
  const t0 = performance.now();
  const labRows = db.select({ id: labs.id, name: labs.name, codePrefix: labs.codePrefix }).from(labs).all();
  const registry = { labs: labRows } as Registry;
  const existingSites = loadSitesByName(
    db,
    rows.map((r) => r.site_name),
  );
  const createdSites = new Map<string, SiteRef[]>();
  const sampleCache = new Map<string, number>();
  const pubCache = new Map<string, number>();
  const createdSiteIds: number[] = [];
  const createdSampleIds: number[] = [];
  const ids: number[] = [];

  const sampleLookup = db.$client.prepare("select id from samples where site_id = ? and field_code = ?").pluck();
  const pubLookup = db.$client.prepare("select id from publications where lower(doi) = lower(?)").pluck();

  rows.forEach((row, i) => {
    // Lab
    let labId: number;
    const lab = resolveLab(row, registry, ctx.userLabId);
    if ("issue" in lab) throw new CommitRefused(lab.issue.message, 400);
    if ("labId" in lab) labId = lab.labId;
    else {
      let prefix = lab.create.codePrefix || "LAB";
      const used = new Set(registry.labs.map((l) => l.codePrefix.toLowerCase()));
      for (let k = 2; used.has(prefix.toLowerCase()); k++) prefix = `${lab.create.codePrefix}${k}`;
      const created = db.insert(labs).values({ name: lab.create.name, codePrefix: prefix }).returning().get();
      registry.labs.push({ id: created.id, name: created.name, codePrefix: created.codePrefix });
      audit(db, {
        actorId: ctx.userId,
        action: "lab.create",
        entity: "lab",
        entityId: created.id,
        after: { name: created.name, codePrefix: prefix },
        ip: options.ip,
      });
      labId = created.id;
    }
    // Site: same name and within ~100 m
    let site =
      findSite(existingSites.get(row.site_name), row.latitude, row.longitude) ??
      findSite(createdSites.get(row.site_name), row.latitude, row.longitude);
    if (!site) {
      const created = db.insert(sites).values(siteValues(row, ctx.userId)).returning({ id: sites.id }).get();
      site = { id: created.id, name: row.site_name, latitude: row.latitude, longitude: row.longitude };
      createdSites.set(site.name, [...(createdSites.get(site.name) ?? []), site]);
      createdSiteIds.push(created.id);
    }
    // Sample: same site and field code
    const sKey = `${site.id}|${row.sample_code}`;
    let sampleId = sampleCache.get(sKey) ?? (sampleLookup.get(site.id, row.sample_code) as number | undefined);
    if (sampleId === undefined) {
      sampleId = db
        .insert(samples)
        .values({ siteId: site.id, ...sampleValues(row) })
        .returning({ id: samples.id })
        .get().id;
      createdSampleIds.push(sampleId);
    }
    sampleCache.set(sKey, sampleId);
    // Publication by DOI
    let publicationId: number | null = null;
    if (row.doi) {
      const key = row.doi.toLowerCase();
      publicationId = pubCache.get(key) ?? (pubLookup.get(row.doi) as number | undefined) ?? null;
      if (publicationId == null) {
        publicationId = db
          .insert(publications)
          .values({ citation: `DOI ${row.doi}`, doi: row.doi })
          .returning({ id: publications.id })
          .get().id;
      }
      pubCache.set(key, publicationId);
    }
    const det = insertDetermination(
      db,
      {
        sampleId,
        labId,
        ...determinationValues(row),
        status: "submitted",
        contributorId: ctx.userId,
        publicationId,
        uploadBatchId: ctx.batchId,
      },
      ctx.userId,
    );
    ids.push(det.id);
    options.afterRow?.(i);
  });
  const t1 = performance.now();
  calibrateDeterminations(db, ids);
  runChecksFor(db, ids);
  const t2 = performance.now();
  if (options.timings) {
    options.timings.insertMs = t1 - t0;
    options.timings.calibrateMs = t2 - t1;
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
  const validation = validateRows(db, { headers, rows }, batch.mapping ?? {}, { userLabId: labId });
  if (mode === "all" && validation.errors.length > 0) {
    throw new CommitRefused(
      `The file has ${validation.errors.length} error${validation.errors.length === 1 ? "" : "s"} in ${validation.results.length - validation.validCount} row(s); fix them or commit the valid rows only.`,
    );
  }
  const valid = validation.results.filter((r) => r.value).map((r) => r.value!);
  if (valid.length === 0) throw new CommitRefused("No row is valid; nothing to commit.", 400);
  return db.transaction((tx) => {
    const result = writeRows(db, valid, { userId: actor.userId, batchId: batch.id, userLabId: labId }, options);
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
  });
}

/** Rows sent as JSON to the API: all valid → committed as one batch of kind json; else errors and nothing written. */
export function submitJsonRows(
  db: Db,
  items: unknown[],
  actor: { userId: number },
  options: CommitOptions = {},
): { ok: true; determinationIds: number[] } | { ok: false; errors: (UploadRowError & { index: number })[] } {
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
  const validation = validateRows(db, { headers, rows }, mapping, { userLabId: labId });
  for (const r of rows) {
    if (r.cells.length > 0 && !validation.results.some((v) => v.n === r.n)) {
      errors.push({ index: r.n - 1, row: r.n, column: "", message: "The item is empty." });
    }
  }
  for (const e of validation.errors) errors.push({ index: e.row - 1, ...e });
  if (errors.length > 0) {
    errors.sort((a, b) => a.index - b.index);
    return { ok: false, errors };
  }
  const valid = validation.results.map((r) => r.value!);
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
        rowCount: valid.length,
        validCount: valid.length,
        committedCount: valid.length,
        errors: [],
        payload: [],
        committedAt: new Date(),
      })
      .returning()
      .get();
    const result = writeRows(db, valid, { userId: actor.userId, batchId: batch.id, userLabId: labId }, options);
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
    return { ok: true as const, determinationIds: result.determinationIds };
  });
}

// Margin reconstructions for the reconstruction check: the editors' list, adding one from an
// uploaded GeoJSON file (validated in full, every problem reported at once), and choosing the one
// the check uses, which reruns the checks over the whole registry as a background job.

import type { Db } from "#app/db/client.server.ts";
import { audit } from "#app/models/audit.server.ts";
import { parseReconstruction } from "#app/science/checks/reconstruction-file.ts";
import { startCheckRun } from "./check-job.server.ts";

export type ReconstructionListItem = {
  id: number;
  name: string;
  description: string | null;
  uncertaintyYr: number | null;
  usedForChecks: boolean;
  isDemo: boolean;
  isochrones: number;
  oldestCalBp: number | null;
  youngestCalBp: number | null;
  createdAt: number;
  createdByName: string | null;
};

/** Every stored reconstruction, newest first, with its isochrone count and age span (from the stored GeoJSON). */
export function listReconstructions(db: Db): ReconstructionListItem[] {
  const rows = db.$client
    .prepare(
      `select r.id, r.name, r.description, r.uncertainty_yr as uncertaintyYr, r.used_for_checks as usedForChecks,
         r.is_demo as isDemo, r.created_at as createdAt, u.name as createdByName,
         (select count(*) from json_each(r.geojson, '$.features')) as isochrones,
         (select max(json_extract(f.value, '$.properties.age_cal_bp')) from json_each(r.geojson, '$.features') f) as oldestCalBp,
         (select min(json_extract(f.value, '$.properties.age_cal_bp')) from json_each(r.geojson, '$.features') f) as youngestCalBp
       from reconstructions r left join users u on u.id = r.created_by order by r.id desc`,
    )
    .all() as (Omit<ReconstructionListItem, "usedForChecks" | "isDemo"> & { usedForChecks: number; isDemo: number })[];
  return rows.map((r) => ({ ...r, usedForChecks: r.usedForChecks === 1, isDemo: r.isDemo === 1 }));
}

export type ReconstructionInput = {
  name: string;
  description?: string;
  /** The stated 1σ uncertainty of the isochrone ages; when absent the file's own age_uncertainty_yr. */
  uncertaintyYr?: number;
  /** Use it for the checks at once (and rerun them). */
  useForChecks: boolean;
};

export type AddReconstructionResult =
  | { ok: true; id: number; isochrones: number; jobId: number | null; total: number }
  | { ok: false; field: "file" | "uncertaintyYr" | "name"; errors: string[] };

/** How many problems of a bad file are listed before "… and N more". */
export const LISTED_PROBLEMS = 25;

function listProblems(errors: string[]): string[] {
  if (errors.length <= LISTED_PROBLEMS) return errors;
  return [...errors.slice(0, LISTED_PROBLEMS), `… and ${errors.length - LISTED_PROBLEMS} more problems.`];
}

/**
 * Reads, validates and stores a reconstruction file (already size-checked by the caller). Bad
 * bytes, bad JSON and every problem of the GeoJSON come back as messages; nothing is written then.
 */
export function addReconstruction(
  db: Db,
  bytes: Uint8Array,
  input: ReconstructionInput,
  actor: { userId: number; ip?: string | null },
): AddReconstructionResult {
  let text: string;
  try {
    text = new TextDecoder("utf-8", { fatal: true }).decode(bytes);
  } catch {
    return { ok: false, field: "file", errors: ["The file is not UTF-8 text; save the GeoJSON as UTF-8."] };
  }
  let json: unknown;
  try {
    json = JSON.parse(text.replace(/^\uFEFF/, ""));
  } catch (e) {
    const why = e instanceof Error ? e.message : String(e);
    return { ok: false, field: "file", errors: [`The file is not valid JSON (${why}).`] };
  }
  const parsed = parseReconstruction(json);
  if (!parsed.ok) return { ok: false, field: "file", errors: listProblems(parsed.errors) };
  const uncertaintyYr = input.uncertaintyYr ?? parsed.statedUncertaintyYr;
  if (uncertaintyYr == null) {
    return {
      ok: false,
      field: "uncertaintyYr",
      errors: ["State the uncertainty of the isochrone ages: give it here, or as age_uncertainty_yr on the file's features."],
    };
  }
  const taken = db.$client.prepare("select 1 from reconstructions where lower(name) = lower(?)").pluck().get(input.name);
  if (taken) return { ok: false, field: "name", errors: [`A reconstruction named “${input.name}” is already stored.`] };
  const id = db.$client.transaction(() => {
    const row = db.$client
      .prepare(
        "insert into reconstructions (name, description, geojson, is_demo, uncertainty_yr, used_for_checks, created_by, created_at) values (?, ?, ?, 0, ?, 0, ?, ?) returning id",
      )
      .get(input.name, input.description ?? null, JSON.stringify(json), uncertaintyYr, actor.userId, Date.now()) as {
      id: number;
    };
    audit(db, {
      actorId: actor.userId,
      action: "reconstruction.add",
      entity: "reconstruction",
      entityId: row.id,
      after: { name: input.name, isochrones: parsed.isochrones.length, uncertaintyYr },
      ip: actor.ip,
    });
    return row.id;
  })();
  const run = input.useForChecks ? chooseReconstruction(db, id, actor) : null;
  return { ok: true, id, isochrones: parsed.isochrones.length, jobId: run?.jobId ?? null, total: run?.total ?? 0 };
}

/**
 * Makes one reconstruction (or none, with `id` null) the one the check uses, audited, and starts
 * the whole-registry check run so every result follows the change. Null when the id is unknown.
 */
export function chooseReconstruction(
  db: Db,
  id: number | null,
  actor: { userId: number; ip?: string | null },
): { jobId: number; total: number; name: string | null; changed: boolean } | null {
  const sqlite = db.$client;
  const target =
    id === null
      ? null
      : (sqlite.prepare("select id, name, used_for_checks as used from reconstructions where id = ?").get(id) as
          { id: number; name: string; used: number } | undefined);
  if (id !== null && !target) return null;
  const before = sqlite.prepare("select id, name from reconstructions where used_for_checks = 1").get() as
    { id: number; name: string } | undefined;
  if ((before?.id ?? null) === (target?.id ?? null)) return { jobId: 0, total: 0, name: target?.name ?? null, changed: false };
  sqlite.transaction(() => {
    sqlite.prepare("update reconstructions set used_for_checks = 0 where used_for_checks = 1").run();
    if (target) sqlite.prepare("update reconstructions set used_for_checks = 1 where id = ?").run(target.id);
    audit(db, {
      actorId: actor.userId,
      action: "reconstruction.choose",
      entity: "reconstruction",
      entityId: target?.id ?? null,
      before: before ? { id: before.id, name: before.name } : null,
      after: target ? { id: target.id, name: target.name } : null,
      ip: actor.ip,
    });
  })();
  const reason = target
    ? `Checks rerun: the reconstruction check now uses “${target.name}”`
    : "Checks rerun without a reconstruction";
  const job = startCheckRun(db, { actorId: actor.userId, reason });
  return { jobId: job.jobId, total: job.total, name: target?.name ?? null, changed: true };
}

// What pages, downloads and the API read about runs and ensembles: one query per view, no
// per-row queries.

import { asc, desc, eq, sql } from "drizzle-orm";
import type { Db } from "#app/db/client.server.ts";
import { jobs, modelRunMargins, modelRunScores, modelRuns } from "#app/db/schema.ts";
import { toCsv } from "#app/utils/csv.ts";
import type { RunMapSite } from "#app/utils/run-map.ts";

export type RunRow = typeof modelRuns.$inferSelect;

export function getRun(db: Db, id: number): RunRow | undefined {
  return db.select().from(modelRuns).where(eq(modelRuns.id, id)).get();
}

export function runScores(db: Db, id: number) {
  return db
    .select({
      determinationId: modelRunScores.determinationId,
      score: modelRunScores.score,
      implausibility: modelRunScores.implausibility,
      modelDeglaciationCalBp: modelRunScores.modelDeglaciationCalBp,
      logLikelihood: modelRunScores.logLikelihood,
    })
    .from(modelRunScores)
    .where(eq(modelRunScores.runId, id))
    .orderBy(asc(modelRunScores.determinationId))
    .all();
}

/** The API's view of a run (GET /api/v1/model-runs/{id}). */
export function apiRun(db: Db, run: RunRow) {
  return {
    id: run.id,
    name: run.name,
    ensemble: run.ensemble,
    status: run.status,
    error: run.error,
    parameters: run.parameters,
    log_likelihood: run.totalLogLikelihood,
    n_constraints: run.nConstraints,
    max_implausibility: run.maxImplausibility,
    second_implausibility: run.secondImplausibility,
    ruled_out: run.ruledOut,
    scores: runScores(db, run.id).map((s) => ({
      determination_id: s.determinationId,
      score: s.score,
      implausibility: s.implausibility,
      model_deglaciation_cal_bp: s.modelDeglaciationCalBp,
    })),
  };
}

/** Runs of an ensemble, ranked by log L (scored first, best first). */
export function ensembleRuns(db: Db, name: string): RunRow[] {
  return db
    .select()
    .from(modelRuns)
    .where(eq(modelRuns.ensemble, name))
    .orderBy(sql`${modelRuns.totalLogLikelihood} is null`, desc(modelRuns.totalLogLikelihood), asc(modelRuns.id))
    .all();
}

export function apiEnsemble(runs: RunRow[], name: string) {
  return {
    name,
    runs: runs.map((r, i) => ({
      rank: r.status === "scored" ? i + 1 : null,
      id: r.id,
      name: r.name,
      status: r.status,
      parameters: r.parameters ?? {},
      log_likelihood: r.totalLogLikelihood,
      n_constraints: r.nConstraints,
      share_agreeing: r.shareAgreeing,
      max_implausibility: r.maxImplausibility,
      second_implausibility: r.secondImplausibility,
      ruled_out: r.ruledOut,
    })),
  };
}

export function parameterNames(runs: RunRow[]): string[] {
  const names = new Set<string>();
  for (const r of runs) for (const k of Object.keys(r.parameters ?? {})) names.add(k);
  return [...names].sort();
}

/** Emulator-training CSV: run, parameters, log L, implausibilities, counts. Spreadsheet-safe. */
export function ensembleCsv(runs: RunRow[]): string {
  const params = parameterNames(runs);
  const header = [
    "run",
    ...params,
    "log_likelihood",
    "max_implausibility",
    "second_implausibility",
    "ruled_out",
    "n_constraints",
    "share_score_ge_0_5",
    "status",
  ];
  return toCsv(
    header,
    runs.map((r) => [
      r.name,
      ...params.map((p) => r.parameters?.[p] ?? null),
      r.totalLogLikelihood,
      r.maxImplausibility,
      r.secondImplausibility,
      r.ruledOut === null ? null : r.ruledOut ? 1 : 0,
      r.nConstraints,
      r.shareAgreeing,
      r.status,
    ]),
  );
}

/** Every run's per-constraint scores, one row per run and constraint. */
export function ensembleScoresCsv(db: Db, runs: RunRow[]): string {
  const ids = runs.map((r) => r.id);
  const names = new Map(runs.map((r) => [r.id, r.name]));
  const rows = ids.length
    ? db
        .select()
        .from(modelRunScores)
        .where(
          sql`${modelRunScores.runId} in (${sql.join(
            ids.map((id) => sql`${id}`),
            sql`, `,
          )})`,
        )
        .orderBy(asc(modelRunScores.runId), asc(modelRunScores.determinationId))
        .all()
    : [];
  return toCsv(
    ["run", "determination_id", "score", "log_likelihood_term", "implausibility", "model_deglaciation_cal_bp"],
    rows.map((s) => [
      names.get(s.runId),
      s.determinationId,
      s.score,
      s.logLikelihood,
      s.implausibility,
      s.modelDeglaciationCalBp,
    ]),
  );
}

/** Runs a modeller can see on /runs: their own, plus the demo's, newest first, with job progress. */
export function listRuns(db: Db, userId: number) {
  return db
    .select({ run: modelRuns, progress: jobs.progress, total: jobs.total })
    .from(modelRuns)
    .leftJoin(jobs, eq(jobs.id, modelRuns.jobId))
    .where(
      sql`${modelRuns.userId} = ${userId} or ${modelRuns.ensemble} in (select ensemble from model_runs where ensemble is not null and user_id != ${userId})`,
    )
    .orderBy(desc(modelRuns.id))
    .limit(500)
    .all();
}

/** The worst-fitting constraints of a run with their site, for the run page. */
export function worstConstraints(db: Db, runId: number, limit = 15) {
  return db.$client
    .prepare(
      `select s.determination_id as id, s.score, s.implausibility, s.model_deglaciation_cal_bp as modelCalBp,
              d.lab_code as labCode, d.constraint_kind as kind, d.grade, c.median_cal_bp as medianCalBp, si.name as site
       from model_run_scores s join determinations d on d.id = s.determination_id
       join samples sa on sa.id = d.sample_id join sites si on si.id = sa.site_id
       left join calibrations c on c.determination_id = d.id and c.is_current = 1
       where s.run_id = ? order by s.implausibility desc, s.score asc limit ?`,
    )
    .all(runId, limit) as {
    id: number;
    score: number;
    implausibility: number;
    modelCalBp: number;
    labCode: string;
    kind: string;
    grade: number | null;
    medianCalBp: number | null;
    site: string;
  }[];
}

/**
 * What the ensemble's constraints can tell apart: per constraint kind, how many constraints there
 * are and how many score differently (by more than 0.2) across the ensemble's runs.
 */
export function identifiability(db: Db, runIds: number[]) {
  if (!runIds.length) return [];
  const ids = runIds.join(",");
  return db.$client
    .prepare(
      `select d.constraint_kind as kind, count(*) as n, sum(s.spread > 0.2) as informative
       from (select determination_id, max(score) - min(score) as spread from model_run_scores
             where run_id in (${ids}) group by determination_id) s
       join determinations d on d.id = s.determination_id group by d.constraint_kind order by d.constraint_kind`,
    )
    .all() as { kind: string; n: number; informative: number }[];
}

/** A scored run's constraints gathered by site, for the run page's map. */
export function runSiteScores(db: Db, runId: number): RunMapSite[] {
  return db.$client
    .prepare(
      `select si.id, si.name, si.latitude as lat, si.longitude as lon, count(*) as n, avg(s.score) as meanScore,
              min(s.score) as minScore, sum(coalesce(s.implausibility, 0) > 3) as nImplausible
       from model_run_scores s join determinations d on d.id = s.determination_id
       join samples sa on sa.id = d.sample_id join sites si on si.id = sa.site_id
       where s.run_id = ? group by si.id order by meanScore desc`,
    )
    .all(runId) as RunMapSite[];
}

/** A run's stored margin outlines, oldest first (see margin-outline.ts). */
export function runMargins(db: Db, runId: number): { calBp: number; coordinates: number[][][][] }[] {
  return db
    .select({ calBp: modelRunMargins.calBp, coordinates: modelRunMargins.coordinates })
    .from(modelRunMargins)
    .where(eq(modelRunMargins.runId, runId))
    .orderBy(desc(modelRunMargins.calBp))
    .all();
}

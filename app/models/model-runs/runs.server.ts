// Model runs in the registry: a checked file kept under the data folder, a row that goes
// queued → running → scored | failed (a file whose time units need an offset waits, queued, with
// `time_mapping` set until the modeller states it), its per-constraint scores and its margin
// outlines. Scoring is a background job of the generic runner (models/jobs.server.ts, kind
// "score-model-runs"; its progress counts time slices). A file that fails its checks is refused
// before anything is written.

import { copyFileSync, mkdirSync, rmSync } from "node:fs";
import { basename, dirname, join, resolve } from "node:path";
import { and, eq, inArray, isNull } from "drizzle-orm";
import type { Db } from "#app/db/client.server.ts";
import { modelRunMargins, modelRunScores, modelRuns, type TimeMappingNeeded } from "#app/db/schema.ts";
import { startJob } from "#app/models/jobs.server.ts";
import { gradeWeight, logLikelihoodTerm } from "#app/science/scoring/likelihood.ts";
import { env } from "#app/utils/env.server.ts";
import { loadConstraints, type ConstraintChoice } from "./constraints.server.ts";
import { ModelRunFileError } from "./errors.ts";
import { closeRunFile, openRunFile, type OpenOptions } from "./run-file.server.ts";
import { scoreRun, type RunScore, type ScoringSettings } from "./score-run.server.ts";

export type ModelRunRow = typeof modelRuns.$inferSelect;

export interface NewRun {
  userId: number;
  name: string;
  ensemble?: string | null;
  /** The uploaded file (a temporary path) and its original name. */
  filePath: string;
  fileName: string;
  parameters?: Record<string, number | string> | null;
  timeOffset?: number | null;
  thresholdM?: number | null;
  tolerance?: number | null;
  epsilon?: number | null;
  choice?: ConstraintChoice;
  maxBytes?: number;
}

/** Folder model-run files are kept in: beside the database file. */
export function runFilesDir(): string {
  return resolve(dirname(env().DATABASE_URL), "model-runs");
}

export function storedFile(run: Pick<ModelRunRow, "storedPath">): string | null {
  return run.storedPath ? join(runFilesDir(), run.storedPath) : null;
}

export interface CheckedFile {
  format: "netcdf" | "geojson";
  set: ReturnType<typeof loadConstraints>;
  nSlices: number;
  /** Set when the time units need an offset and the caller keeps such files for a later step. */
  timeMapping: TimeMappingNeeded | null;
}

/**
 * Checks a file (it opens, has a time axis, ice and coordinates, and overlaps the chosen
 * constraints) without writing anything. Throws ModelRunFileError with the reason. With
 * `keepUnmapped`, a file whose time units need an offset passes with `timeMapping` set (its
 * overlap is checked once the offset is stated).
 */
export async function checkRunFile(db: Db, input: NewRun, keepUnmapped = false): Promise<CheckedFile> {
  const set = loadConstraints(db, input.choice);
  if (!set.constraints.length)
    throw new ModelRunFileError("no-overlap", `There are no constraints to score against (${set.label}).`);
  let run: Awaited<ReturnType<typeof openRunFile>>;
  try {
    run = await openRunFile(input.filePath, {
      timeOffset: input.timeOffset,
      thresholdM: input.thresholdM ?? undefined,
      maxBytes: input.maxBytes,
    });
  } catch (e) {
    if (keepUnmapped && e instanceof ModelRunFileError && e.code === "time-mapping-needed" && e.timeAxis) {
      return { format: "netcdf", set, nSlices: e.timeAxis.n, timeMapping: { ...e.timeAxis, message: e.message } };
    }
    throw e;
  }
  try {
    // A cheap overlap check on the slice ages: the run must reach some constraint's calendar ages.
    const ages = run.kind === "grid" ? run.slicesCalBp : run.slices.map((s) => s.calBp);
    const oldest = Math.max(...ages);
    const youngest = Math.min(...ages);
    const overlaps = set.constraints.some(
      (c) => c.density.startCalBp <= oldest && c.density.startCalBp + c.density.values.length >= youngest,
    );
    if (!overlaps) {
      throw new ModelRunFileError(
        "no-overlap",
        `The run's times (${Math.round(youngest)}–${Math.round(oldest)} cal BP) do not overlap the constraints' calendar ages (${set.label}).`,
      );
    }
    return { format: run.kind === "grid" ? "netcdf" : "geojson", set, nSlices: ages.length, timeMapping: null };
  } finally {
    closeRunFile(run);
  }
}

/**
 * Checks, keeps the file and records the run as queued (or waiting for its time mapping when
 * `keepUnmapped` and the units need an offset); nothing is kept for a bad file. Scoring is started
 * separately (startScoring), so a batch can be checked whole first.
 */
export async function createRun(db: Db, input: NewRun, keepUnmapped = false): Promise<ModelRunRow> {
  const { format, set, nSlices, timeMapping } = await checkRunFile(db, input, keepUnmapped);
  const row = db
    .insert(modelRuns)
    .values({
      userId: input.userId,
      name: input.name,
      ensemble: input.ensemble || null,
      fileName: basename(input.fileName),
      format,
      status: "queued",
      parameters: input.parameters ?? null,
      timeOffsetCalBp: input.timeOffset ?? null,
      thresholdM: input.thresholdM ?? null,
      tolerance: input.tolerance ?? null,
      epsilon: input.epsilon ?? null,
      releaseId: set.releaseId,
      constraintFilter: set.filter,
      nSlices,
      timeMapping,
    })
    .returning()
    .get();
  const rel = join(String(row.id), basename(input.fileName).replace(/[^\w.-]+/g, "_") || "run");
  try {
    mkdirSync(join(runFilesDir(), String(row.id)), { recursive: true });
    copyFileSync(input.filePath, join(runFilesDir(), rel));
  } catch (e) {
    deleteRun(db, row.id);
    throw e;
  }
  db.update(modelRuns).set({ storedPath: rel }).where(eq(modelRuns.id, row.id)).run();
  return { ...row, storedPath: rel };
}

/** Deletes a run, its scores and its kept file. */
export function deleteRun(db: Db, id: number): void {
  db.delete(modelRuns).where(eq(modelRuns.id, id)).run();
  rmSync(join(runFilesDir(), String(id)), { recursive: true, force: true });
}

/** Writes a run's scores and totals in one transaction. */
export function saveScores(db: Db, runId: number, r: RunScore, grades: Map<number, number | null>): void {
  db.transaction((tx) => {
    tx.delete(modelRunScores).where(eq(modelRunScores.runId, runId)).run();
    const rows = r.scores.map((s) => ({
      runId,
      determinationId: s.determinationId,
      score: s.score,
      logLikelihood: logLikelihoodTerm(s.score, gradeWeight(grades.get(s.determinationId) ?? null), r.settings.epsilon),
      implausibility: s.implausibility,
      modelDeglaciationCalBp: s.modelDeglaciationCalBp,
    }));
    for (let i = 0; i < rows.length; i += 500)
      tx.insert(modelRunScores)
        .values(rows.slice(i, i + 500))
        .run();
    tx.delete(modelRunMargins).where(eq(modelRunMargins.runId, runId)).run();
    for (const m of r.margins) tx.insert(modelRunMargins).values({ runId, calBp: m.calBp, coordinates: m.coordinates }).run();
    tx.update(modelRuns)
      .set({
        status: "scored",
        error: null,
        totalLogLikelihood: r.totals.logLikelihood,
        nConstraints: r.totals.nConstraints,
        shareAgreeing: r.totals.shareAgreeing,
        maxImplausibility: r.totals.maxImplausibility,
        secondImplausibility: r.totals.secondImplausibility,
        ruledOut: r.totals.ruledOut,
        tolerance: r.settings.tolerance,
        epsilon: r.settings.epsilon,
        summary: {
          span: r.spanCalBp,
          timeStepYears: r.timeStepYears,
          nOutsideSpan: r.nOutsideSpan,
          nOffDomain: r.nOffDomain,
          nImplausible: r.totals.nImplausible,
        },
      })
      .where(eq(modelRuns.id, runId))
      .run();
  });
}

export type ScoreOutcome = "scored" | "failed" | "skipped";

/**
 * Scores one stored run now and records the outcome on the run (awaitable: the seed and the
 * scoring job wait on it). A run that is gone, already scored or still waiting for its time
 * mapping is skipped. `progress` gets the slices read so far.
 */
export async function scoreStoredRun(db: Db, runId: number, progress?: (slices: number) => void): Promise<ScoreOutcome> {
  const run = db.select().from(modelRuns).where(eq(modelRuns.id, runId)).get();
  if (!run || run.timeMapping || (run.status !== "queued" && run.status !== "running")) return "skipped";
  db.update(modelRuns).set({ status: "running" }).where(eq(modelRuns.id, runId)).run();
  try {
    const set = loadConstraints(db, constraintChoiceOf(db, run));
    const options: OpenOptions = { timeOffset: run.timeOffsetCalBp, thresholdM: run.thresholdM ?? undefined, maxBytes: Infinity };
    const file = await openRunFile(storedFile(run)!, options);
    const settings: ScoringSettings = { tolerance: run.tolerance ?? undefined, epsilon: run.epsilon ?? undefined };
    let result: RunScore;
    try {
      result = await scoreRun(file, set.constraints, settings, { margins: true, progress: (done) => progress?.(done) });
    } finally {
      closeRunFile(file);
    }
    saveScores(db, runId, result, new Map(set.constraints.map((c) => [c.determinationId, c.grade])));
    return "scored";
  } catch (e) {
    const message = e instanceof Error ? e.message : String(e);
    db.update(modelRuns).set({ status: "failed", error: message }).where(eq(modelRuns.id, runId)).run();
    return "failed";
  }
}

/** What a stored run is scored against: its release, or the registry filter it was uploaded with. */
export function constraintChoiceOf(db: Db, run: Pick<ModelRunRow, "releaseId" | "constraintFilter">): ConstraintChoice {
  if (!run.releaseId) return { grades: run.constraintFilter?.grades as number[] | undefined };
  const r = db.$client.prepare("select slug from releases where id = ?").get(run.releaseId) as { slug: string } | undefined;
  return { releaseSlug: r?.slug ?? null };
}

/**
 * Starts one background job (models/jobs.server.ts) that scores the given runs in turn; its
 * progress counts time slices. Runs still waiting for a time mapping are left out. Returns the
 * job's id, or null when there is nothing to score.
 */
export function startScoring(db: Db, ids: number[], actorId: number | null): number | null {
  if (!ids.length) return null;
  const rows = db
    .select({ id: modelRuns.id, nSlices: modelRuns.nSlices })
    .from(modelRuns)
    .where(and(inArray(modelRuns.id, ids), isNull(modelRuns.timeMapping)))
    .all();
  if (!rows.length) return null;
  const runIds = rows.map((r) => r.id);
  const total = rows.reduce((n, r) => n + (r.nSlices ?? 1), 0);
  const { jobId } = startJob(db, { kind: "score-model-runs", total, params: { runIds }, actorId });
  db.update(modelRuns).set({ jobId }).where(inArray(modelRuns.id, runIds)).run();
  return jobId;
}

/**
 * After a restart: runs left queued or cut off while scoring (and not waiting for a time mapping)
 * are queued again and scored by a new job. Returns that job's id, or null.
 */
export function resumeScoring(db: Db): number | null {
  const rows = db
    .select({ id: modelRuns.id })
    .from(modelRuns)
    .where(and(inArray(modelRuns.status, ["queued", "running"]), isNull(modelRuns.timeMapping)))
    .orderBy(modelRuns.id)
    .all();
  if (!rows.length) return null;
  const ids = rows.map((r) => r.id);
  db.update(modelRuns).set({ status: "queued" }).where(inArray(modelRuns.id, ids)).run();
  return startScoring(db, ids, null);
}

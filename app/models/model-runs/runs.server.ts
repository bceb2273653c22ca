// Model runs in the registry: a checked file kept under the data folder, a row that goes
// queued → running → scored | failed, and its per-constraint scores. Scoring runs in the server
// process in the background (a `jobs` row records its progress for the page's progress bar).
// A file that fails its checks is refused before anything is written.

import { copyFileSync, mkdirSync, rmSync } from "node:fs";
import { basename, dirname, join, resolve } from "node:path";
import { eq } from "drizzle-orm";
import type { Db } from "#app/db/client.server.ts";
import { jobs, modelRunScores, modelRuns } from "#app/db/schema.ts";
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

/**
 * Checks a file (it opens, has a time axis, ice and coordinates, and overlaps the chosen
 * constraints) without writing anything. Throws ModelRunFileError with the reason.
 */
export async function checkRunFile(db: Db, input: NewRun) {
  const set = loadConstraints(db, input.choice);
  const run = await openRunFile(input.filePath, {
    timeOffset: input.timeOffset,
    thresholdM: input.thresholdM ?? undefined,
    maxBytes: input.maxBytes,
  });
  try {
    if (!set.constraints.length)
      throw new ModelRunFileError("no-overlap", `There are no constraints to score against (${set.label}).`);
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
    return { format: run.kind === "grid" ? ("netcdf" as const) : ("geojson" as const), set };
  } finally {
    closeRunFile(run);
  }
}

/** Checks, keeps the file and queues the run; returns its id. Nothing is kept for a bad file. */
export async function createRun(db: Db, input: NewRun): Promise<ModelRunRow> {
  const { format, set } = await checkRunFile(db, input);
  const row = db.transaction((tx) => {
    const job = tx
      .insert(jobs)
      .values({ kind: "score-model-run", status: "queued", total: 1, createdBy: input.userId })
      .returning({ id: jobs.id })
      .get();
    return tx
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
        jobId: job.id,
      })
      .returning()
      .get();
  });
  const rel = join(String(row.id), basename(input.fileName).replace(/[^\w.-]+/g, "_") || "run");
  try {
    mkdirSync(join(runFilesDir(), String(row.id)), { recursive: true });
    copyFileSync(input.filePath, join(runFilesDir(), rel));
  } catch (e) {
    db.delete(modelRuns).where(eq(modelRuns.id, row.id)).run();
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

const nextTick = () => new Promise<void>((r) => setImmediate(r));

/** Scores a queued run now (awaitable: the seed and tests wait; the web starts it and returns). */
export async function scoreStoredRun(db: Db, runId: number): Promise<void> {
  const run = db.select().from(modelRuns).where(eq(modelRuns.id, runId)).get();
  if (!run) return;
  const setJob = (v: Partial<typeof jobs.$inferInsert>) =>
    run.jobId && db.update(jobs).set(v).where(eq(jobs.id, run.jobId)).run();
  db.update(modelRuns).set({ status: "running" }).where(eq(modelRuns.id, runId)).run();
  setJob({ status: "running" });
  await nextTick();
  try {
    const set = loadConstraints(
      db,
      run.releaseId
        ? { releaseSlug: releaseSlug(db, run.releaseId) }
        : { grades: run.constraintFilter?.grades as number[] | undefined },
    );
    const options: OpenOptions = { timeOffset: run.timeOffsetCalBp, thresholdM: run.thresholdM ?? undefined, maxBytes: Infinity };
    const file = await openRunFile(storedFile(run)!, options);
    const settings: ScoringSettings = { tolerance: run.tolerance ?? undefined, epsilon: run.epsilon ?? undefined };
    let lastTick = Date.now();
    let result: RunScore;
    try {
      result = scoreRun(file, set.constraints, settings, (done, total) => {
        if (Date.now() - lastTick > 200) {
          lastTick = Date.now();
          setJob({ progress: done, total });
        }
      });
    } finally {
      closeRunFile(file);
    }
    saveScores(db, runId, result, new Map(set.constraints.map((c) => [c.determinationId, c.grade])));
    setJob({ status: "done", progress: 1, total: 1, finishedAt: new Date() });
  } catch (e) {
    const message = e instanceof Error ? e.message : String(e);
    db.update(modelRuns).set({ status: "failed", error: message }).where(eq(modelRuns.id, runId)).run();
    setJob({ status: "failed", message, finishedAt: new Date() });
  }
}

function releaseSlug(db: Db, id: number): string | null {
  const r = db.$client.prepare("select slug from releases where id = ?").get(id) as { slug: string } | undefined;
  return r?.slug ?? null;
}

const queue: number[] = [];
let draining: Promise<void> | null = null;

/** Queues runs for background scoring, one at a time, in the server process. */
export function startScoring(db: Db, ids: number[]): void {
  queue.push(...ids);
  if (draining) return;
  draining = (async () => {
    while (queue.length) await scoreStoredRun(db, queue.shift()!);
  })().finally(() => (draining = null));
}

/** Resolves when every queued run has been scored (tests). */
export async function scoringIdle(): Promise<void> {
  while (draining) await draining;
}

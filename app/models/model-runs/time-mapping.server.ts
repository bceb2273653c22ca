// The time-mapping step: a run whose file's time units do not say how model time maps to cal BP
// is kept, queued but not scored, until the modeller states the cal BP age of model time 0 (the
// time offset). Stating it checks the file again with the offset (time axis, overlap with the
// constraints) and starts scoring; the offset can be applied at once to every run of the same
// ensemble that is still waiting.

import { and, eq, isNotNull } from "drizzle-orm";
import type { Db } from "#app/db/client.server.ts";
import { modelRuns } from "#app/db/schema.ts";
import { ModelRunFileError } from "./errors.ts";
import { checkRunFile, constraintChoiceOf, startScoring, storedFile, type ModelRunRow } from "./runs.server.ts";

/** Runs still waiting for a time offset: this one, and with `wholeEnsemble` its ensemble's others. */
export function waitingRuns(db: Db, run: ModelRunRow, wholeEnsemble: boolean): ModelRunRow[] {
  if (!run.timeMapping) return [];
  if (!wholeEnsemble || !run.ensemble) return [run];
  return db
    .select()
    .from(modelRuns)
    .where(and(eq(modelRuns.ensemble, run.ensemble), eq(modelRuns.userId, run.userId), isNotNull(modelRuns.timeMapping)))
    .orderBy(modelRuns.id)
    .all();
}

export interface OffsetOutcome {
  queued: number[];
  /** Runs the offset did not fit (their times then miss the constraints, or the units are not a time). */
  problems: { id: number; name: string; message: string }[];
  jobId: number | null;
}

/**
 * States the offset for the given waiting runs: each is checked with it and, when it fits, queued
 * and scored by one background job. A run the offset does not fit keeps waiting, with the reason.
 */
export async function stateTimeOffset(db: Db, runs: ModelRunRow[], offset: number, actorId: number): Promise<OffsetOutcome> {
  const queued: number[] = [];
  const problems: OffsetOutcome["problems"] = [];
  for (const run of runs) {
    try {
      const checked = await checkRunFile(db, {
        userId: run.userId,
        name: run.name,
        filePath: storedFile(run)!,
        fileName: run.fileName ?? run.name,
        timeOffset: offset,
        thresholdM: run.thresholdM,
        choice: constraintChoiceOf(db, run),
        maxBytes: Infinity,
      });
      db.update(modelRuns)
        .set({ timeOffsetCalBp: offset, timeMapping: null, nSlices: checked.nSlices, status: "queued", error: null })
        .where(eq(modelRuns.id, run.id))
        .run();
      queued.push(run.id);
    } catch (e) {
      if (!(e instanceof ModelRunFileError)) throw e;
      problems.push({ id: run.id, name: run.name, message: e.message });
    }
  }
  return { queued, problems, jobId: startScoring(db, queued, actorId) };
}

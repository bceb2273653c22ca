import type { JobHandler } from "#app/models/jobs.server.ts";
import { recalibrateJob } from "#app/models/calibration/recalibration.server.ts";
import { checkRunJob } from "#app/models/review/check-job.server.ts";
import { scoreRunsJob } from "#app/models/model-runs/score-job.server.ts";

/**
 * Every kind of background job and the handler that does its work (see models/jobs.server.ts).
 * Add a kind with one line in each place below. Looked up when a job starts (not at import), so a
 * handler module may itself import startJob.
 */
export type JobKind = "recalibrate" | "checks" | "score-model-runs";

export function handlerFor(kind: JobKind): JobHandler<never> {
  switch (kind) {
    case "recalibrate":
      return recalibrateJob as JobHandler<never>;
    case "checks":
      return checkRunJob as JobHandler<never>;
    case "score-model-runs":
      return scoreRunsJob as JobHandler<never>;
  }
}

import { getDb } from "#app/db/client.server.ts";
import { resumeScoring } from "#app/models/model-runs/runs.server.ts";
import { logLine } from "#app/http/request-log.js";

/**
 * Background work a restart cut off, picked up again when the production server starts
 * (server.js calls it through the build's entry module): model runs still queued or cut off while
 * scoring are scored by a new job.
 */
export function resumeBackgroundWork(): void {
  try {
    const jobId = resumeScoring(getDb());
    if (jobId !== null) logLine({ level: "info", message: `Resumed scoring of queued model runs (job ${jobId}).` });
  } catch (error) {
    logLine({
      level: "error",
      message: `Could not resume queued model runs: ${error instanceof Error ? error.message : String(error)}`,
    });
  }
}

import { getDb } from "#app/db/client.server.ts";
import { markInterruptedJobs } from "#app/models/jobs.server.ts";
import { resumeScoring } from "#app/models/model-runs/runs.server.ts";
import { warmDensityTexts } from "#app/models/releases/density-text.server.ts";
import { logLine } from "#app/http/request-log.js";

/**
 * Background work a restart cut off, picked up again when the production server starts
 * (server.js calls it through the build's entry module): jobs still marked queued or running are
 * recorded as interrupted; model runs still queued or cut off while
 * scoring are scored by a new job. Then the calendar densities are written into the download cache in
 * the background (slices between requests), so the first download with densities is as quick as later ones.
 */
export function resumeBackgroundWork(): void {
  try {
    const cut = markInterruptedJobs(getDb());
    if (cut > 0) logLine({ level: "info", message: `${cut} job(s) a restart cut off are recorded as interrupted.` });
  } catch (error) {
    logLine({
      level: "error",
      message: `Could not record interrupted jobs: ${error instanceof Error ? error.message : String(error)}`,
    });
  }
  try {
    const jobId = resumeScoring(getDb());
    if (jobId !== null) logLine({ level: "info", message: `Resumed scoring of queued model runs (job ${jobId}).` });
  } catch (error) {
    logLine({
      level: "error",
      message: `Could not resume queued model runs: ${error instanceof Error ? error.message : String(error)}`,
    });
  }
  const started = performance.now();
  Promise.resolve()
    .then(() => warmDensityTexts(getDb()))
    .then((held) =>
      logLine({
        level: "info",
        message: `Download cache: ${held.entries.toLocaleString("en")} densities held as text (${(held.bytes / 1e6).toFixed(0)} MB) in ${((performance.now() - started) / 1000).toFixed(1)} s.`,
      }),
    )
    .catch((error: unknown) =>
      logLine({
        level: "error",
        message: `Could not fill the download cache: ${error instanceof Error ? error.message : String(error)}`,
      }),
    );
}

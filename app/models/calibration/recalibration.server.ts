import { and, eq, isNull, or, sql } from "drizzle-orm";
import type { Db } from "#app/db/client.server.ts";
import { determinations } from "#app/db/schema.ts";
import { runAllChecks } from "#app/models/review/check-run.server.ts";
import { audit } from "#app/models/audit.server.ts";
import { calibrateDeterminations } from "#app/models/calibration/calibrations.server.ts";
import type { JobHandler } from "#app/models/jobs.server.ts";
import { startJob } from "#app/models/jobs.server.ts";
import { formatCount } from "#app/utils/age-format.ts";

/** Determinations per chunk: small enough that one chunk blocks the event loop for only a moment. */
export const RECALIBRATION_CHUNK = 250;

/**
 * Radiocarbon determinations calibrated on the named curve. A determination without a curve name
 * is calibrated on intcal20, so it counts for intcal20.
 */
function determinationsOnCurve(db: Db, curveName: string): number[] {
  const name = curveName.toLowerCase();
  const onCurve = sql`lower(${determinations.curveName}) = ${name}`;
  return db
    .select({ id: determinations.id })
    .from(determinations)
    .where(
      and(
        eq(determinations.method, "radiocarbon"),
        name === "intcal20" ? or(onCurve, isNull(determinations.curveName)) : onCurve,
      ),
    )
    .orderBy(determinations.id)
    .all()
    .map((r) => r.id);
}

type RecalibrateParams = { curveName: string; reason: string; chunkSize?: number };

/** The job's work: every determination on the curve, a chunk per transaction, then one audit entry. */
export const recalibrateJob: JobHandler<RecalibrateParams> = async (ctx) => {
  const { db, params } = ctx;
  const ids = determinationsOnCurve(db, params.curveName);
  let calibrated = 0;
  let failed = 0;
  await ctx.inChunks(ids, params.chunkSize ?? RECALIBRATION_CHUNK, (chunk) =>
    db.$client
      .transaction(() => {
        const r = calibrateDeterminations(db, chunk);
        calibrated += r.calibrated;
        failed += r.failed;
      })
      .immediate(),
  );
  audit(db, {
    actorId: ctx.actorId,
    action: "calibration.recalibrate",
    entity: "job",
    entityId: ctx.jobId,
    after: { determinations: ids.length, calibrated, failed },
  });
  // Calendar ages changed, so every check that compares them runs again.
  runAllChecks(db);
  return `${formatCount(calibrated)} calibrated${failed ? `, ${formatCount(failed)} could not be calibrated (see each determination)` : ""}; checks run again.`;
};

/**
 * Starts recalibrating every determination on a curve name (after a new version was added or a
 * version activated). Returns at once with the job id; the work continues in the background.
 */
export function startRecalibration(
  db: Db,
  options: { curveName: string; actorId: number | null; reason: string; chunkSize?: number },
): { jobId: number; total: number } {
  const curveName = options.curveName.toLowerCase();
  const total = determinationsOnCurve(db, curveName).length;
  const params: RecalibrateParams = { curveName, reason: options.reason };
  if (options.chunkSize) params.chunkSize = options.chunkSize;
  return startJob(db, { kind: "recalibrate", total, params, actorId: options.actorId });
}

// The whole-registry check run as a background job with progress (the shared job runner): editors
// start it from the checks page; a recalibration or a reconstruction change starts it too. The
// results are computed a chunk at a time and stored in one transaction at the end.

import type { Db } from "#app/db/client.server.ts";
import { audit } from "#app/models/audit.server.ts";
import { startJob, type JobHandler } from "#app/models/jobs.server.ts";
import { prepareChecks } from "#app/science/checks/run.ts";
import type { CheckResult } from "#app/science/checks/types.ts";
import { loadCheckItems, loadCheckReconstruction } from "./check-items.server.ts";
import { neighbourRadiusKm, storeCheckResults } from "./check-run.server.ts";

const CHUNK = 400;

type CheckRunParams = { reason: string };

export const checkRunJob: JobHandler<CheckRunParams> = async (ctx) => {
  const { db } = ctx;
  const items = loadCheckItems(db);
  const check = prepareChecks(items, { radiusKm: neighbourRadiusKm(), reconstruction: loadCheckReconstruction(db) });
  const results = new Map<number, CheckResult[]>();
  await ctx.inChunks(items, CHUNK, (chunk) => {
    for (const it of chunk) results.set(it.id, check(it));
  });
  const summary = db.$client.transaction(() => {
    const s = storeCheckResults(db, results);
    audit(db, {
      actorId: ctx.actorId,
      action: "checks.run",
      entity: "job",
      entityId: ctx.jobId,
      after: { determinations: s.determinations, ...s.bySeverity },
    });
    return s;
  })();
  const s = summary.bySeverity;
  return `${summary.determinations} determinations checked: ${s.conflict} conflicts, ${s.warning} warnings, ${s.note} notes.`;
};

export function startCheckRun(db: Db, options: { actorId: number | null; reason: string }): { jobId: number; total: number } {
  const total = db.$client.prepare("select count(*) from determinations where status != 'withdrawn'").pluck().get() as number;
  return startJob(db, { kind: "checks", total, params: { reason: options.reason }, actorId: options.actorId });
}

// The "score-model-runs" background job: scores the listed runs one after another, counting
// progress in time slices read (the job's total is the runs' slices added up).

import { inArray } from "drizzle-orm";
import { modelRuns } from "#app/db/schema.ts";
import type { JobContext } from "#app/models/jobs.server.ts";
import { scoreStoredRun } from "./runs.server.ts";

export type ScoreJobParams = { runIds: number[] };

const REPORT_MS = 250;

export async function scoreRunsJob(ctx: JobContext<ScoreJobParams>): Promise<string> {
  const slices = new Map(
    ctx.db
      .select({ id: modelRuns.id, n: modelRuns.nSlices })
      .from(modelRuns)
      .where(inArray(modelRuns.id, ctx.params.runIds))
      .all()
      .map((r) => [r.id, r.n ?? 1]),
  );
  const counts = { scored: 0, failed: 0, skipped: 0 };
  let base = 0;
  let last = 0;
  for (const id of ctx.params.runIds) {
    const outcome = await scoreStoredRun(ctx.db, id, (done) => {
      if (performance.now() - last < REPORT_MS) return;
      last = performance.now();
      ctx.report(Math.min(ctx.total, base + done));
    });
    counts[outcome]++;
    base += slices.get(id) ?? 1;
    ctx.report(Math.min(ctx.total, base));
  }
  const parts = [`${counts.scored} run${counts.scored === 1 ? "" : "s"} scored`];
  if (counts.failed) parts.push(`${counts.failed} failed`);
  if (counts.skipped) parts.push(`${counts.skipped} skipped (removed, already scored or waiting for a time offset)`);
  return parts.join(", ") + ".";
}

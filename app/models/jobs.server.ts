import { and, desc, eq, isNull, or, sql } from "drizzle-orm";
import type { Db } from "#app/db/client.server.ts";
import { determinations, jobs } from "#app/db/schema.ts";
import { audit } from "#app/models/audit.server.ts";
import { calibrateDeterminations } from "#app/models/calibration/calibrations.server.ts";

/*
 * Background work inside the server process. A job is a row in `jobs` (the page polls it) and a
 * promise here; the work runs in chunks with setImmediate between them, so the server keeps
 * answering requests while thousands of determinations are recalibrated.
 */

export type JobRow = typeof jobs.$inferSelect;
export type JobView = Pick<JobRow, "id" | "kind" | "status" | "progress" | "total" | "message"> & {
  params: Record<string, unknown> | null;
  createdAt: number;
  finishedAt: number | null;
};

/** Determinations per chunk: small enough that one chunk blocks the event loop for only a moment. */
export const RECALIBRATION_CHUNK = 250;

const running = new Map<number, Promise<void>>();

const nextTick = () => new Promise<void>((resolve) => setImmediate(resolve));

/**
 * Radiocarbon determinations calibrated on the named curve. A determination without a curve name
 * is calibrated on intcal20, so it counts for intcal20.
 */
export function determinationsOnCurve(db: Db, curveName: string): number[] {
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

/**
 * Starts recalibrating every determination on a curve name (after a new version was added or a
 * version activated). Returns at once with the job id; the work continues in the background.
 */
export function startRecalibration(
  db: Db,
  options: { curveName: string; actorId: number | null; reason: string; chunkSize?: number },
): { jobId: number; total: number } {
  const ids = determinationsOnCurve(db, options.curveName);
  const job = db
    .insert(jobs)
    .values({
      kind: "recalibrate",
      status: "queued",
      progress: 0,
      total: ids.length,
      params: { curveName: options.curveName.toLowerCase(), reason: options.reason },
      createdBy: options.actorId,
    })
    .returning({ id: jobs.id })
    .get();
  const promise = runRecalibration(db, job.id, ids, options.actorId, options.chunkSize ?? RECALIBRATION_CHUNK);
  running.set(job.id, promise);
  void promise.finally(() => running.delete(job.id));
  return { jobId: job.id, total: ids.length };
}

async function runRecalibration(db: Db, jobId: number, ids: number[], actorId: number | null, chunkSize: number) {
  let calibrated = 0;
  let failed = 0;
  try {
    // Let the request that started the job finish before any work is done.
    await nextTick();
    db.update(jobs).set({ status: "running" }).where(eq(jobs.id, jobId)).run();
    for (let i = 0; i < ids.length; i += chunkSize) {
      const chunk = ids.slice(i, i + chunkSize);
      const done = Math.min(i + chunkSize, ids.length);
      db.$client.transaction(() => {
        const r = calibrateDeterminations(db, chunk);
        calibrated += r.calibrated;
        failed += r.failed;
        db.update(jobs).set({ progress: done }).where(eq(jobs.id, jobId)).run();
      })();
      await nextTick();
    }
    const message = `${calibrated} calibrated${failed ? `, ${failed} could not be calibrated (see each determination)` : ""}.`;
    db.transaction((tx) => {
      tx.update(jobs)
        .set({ status: "done", progress: ids.length, message, finishedAt: new Date() })
        .where(eq(jobs.id, jobId))
        .run();
      audit(tx, {
        actorId,
        action: "calibration.recalibrate",
        entity: "job",
        entityId: jobId,
        after: { determinations: ids.length, calibrated, failed },
      });
    });
  } catch (error) {
    const message = `Stopped after ${calibrated + failed} of ${ids.length}: ${error instanceof Error ? error.message : String(error)}`;
    console.error(`Job ${jobId} failed`, error);
    try {
      db.update(jobs).set({ status: "failed", message, finishedAt: new Date() }).where(eq(jobs.id, jobId)).run();
    } catch {
      // The database itself is gone (e.g. closed during shutdown); nothing more to record.
    }
  }
}

/** Resolves when a job started in this process has finished (at once if it is not running here). */
export function jobFinished(jobId: number): Promise<void> {
  return running.get(jobId) ?? Promise.resolve();
}

function view(row: JobRow): JobView {
  return {
    id: row.id,
    kind: row.kind,
    status: row.status,
    progress: row.progress,
    total: row.total,
    message: row.message,
    params: row.params ?? null,
    createdAt: row.createdAt.getTime(),
    finishedAt: row.finishedAt ? row.finishedAt.getTime() : null,
  };
}

/**
 * A job as the page shows it. A job left queued or running by an earlier server process was cut
 * off by a restart; it is marked failed so nobody waits on it forever.
 */
export function getJob(db: Db, id: number): JobView | null {
  const row = db.select().from(jobs).where(eq(jobs.id, id)).get();
  if (!row) return null;
  if ((row.status === "queued" || row.status === "running") && !running.has(id)) {
    const message = `Interrupted by a server restart after ${row.progress} of ${row.total}; activate the curve version again to finish.`;
    db.update(jobs).set({ status: "failed", message, finishedAt: new Date() }).where(eq(jobs.id, id)).run();
    return view({ ...row, status: "failed", message, finishedAt: new Date() });
  }
  return view(row);
}

export function recentJobs(db: Db, kind: string, limit = 5): JobView[] {
  return db
    .select()
    .from(jobs)
    .where(eq(jobs.kind, kind))
    .orderBy(desc(jobs.id))
    .limit(limit)
    .all()
    .map((row) =>
      (row.status === "queued" || row.status === "running") && !running.has(row.id) ? getJob(db, row.id)! : view(row),
    );
}

import { desc, eq } from "drizzle-orm";
import type { Db } from "#app/db/client.server.ts";
import { jobs } from "#app/db/schema.ts";
import { writeWhenFree } from "#app/db/write-when-free.server.ts";
import { handlerFor, type JobKind } from "#app/models/job-handlers.server.ts";
import { databaseFileOf, runInWorker } from "#app/workers/pool.server.ts";

/*
 * The one background-job runner. A job is a row in `jobs` (pages poll it through /api/jobs/:id and
 * show it with components/ui/job-progress.tsx) and a promise in this process.
 *
 *   const { jobId } = startJob(db, { kind: "recalibrate", total: ids.length, params: { ids }, actorId });
 *
 * The handler for each kind is registered in models/job-handlers.server.ts and receives a
 * JobContext: `ctx.inChunks(items, size, fn)` runs `fn` over the items a chunk at a time, yields to
 * the event loop between chunks (so the server keeps answering) and records progress after each;
 * `ctx.report(done)` records progress for work that is not a list. The handler returns the closing
 * message; a throw marks the job failed with the error's message. Params must be plain JSON, and the
 * handler is found by kind: a job runs in the writer worker thread (workers/pool.server.ts) with its
 * own connection, so pages keep answering while it works; a handler passed in (tests) or an
 * in-memory database keeps the work in this thread, a chunk at a time.
 */

export type JobRow = typeof jobs.$inferSelect;
export type JobView = Pick<JobRow, "id" | "kind" | "status" | "progress" | "total" | "message" | "createdBy"> & {
  params: Record<string, unknown> | null;
  createdAt: number;
  finishedAt: number | null;
};

export type JobContext<P> = {
  db: Db;
  jobId: number;
  params: P;
  actorId: number | null;
  total: number;
  /** Records how many of `total` are done (and optionally a message shown while running). */
  report(done: number, message?: string): void;
  /** Runs `fn` over `items` in chunks of `size`, yielding between chunks and reporting progress after each. */
  inChunks<T>(items: readonly T[], size: number, fn: (chunk: T[]) => void): Promise<void>;
};

/** Does the work of one kind of job; returns the message shown when it is done. */
export type JobHandler<P> = (ctx: JobContext<P>) => Promise<string> | string;

export type JobSpec<P extends Record<string, unknown>> = { kind: JobKind; total: number; params: P; actorId: number | null };

const running = new Map<number, Promise<void>>();
/** Progress of tracked jobs whose work holds an open transaction elsewhere: kept here, where pages read it. */
const live = new Map<number, { progress: number; message?: string }>();
const nextTick = () => new Promise<void>((resolve) => setImmediate(resolve));

/** Records a job and starts it in the background; returns at once with its id. */
export function startJob<P extends Record<string, unknown>>(
  db: Db,
  spec: JobSpec<P>,
  handler?: JobHandler<P>,
): { jobId: number; total: number } {
  const job = db
    .insert(jobs)
    .values({ kind: spec.kind, status: "queued", progress: 0, total: spec.total, params: spec.params, createdBy: spec.actorId })
    .returning({ id: jobs.id })
    .get();
  const file = databaseFileOf(db);
  const promise =
    handler || !file
      ? runJobHere(db, job.id, spec, handler ?? (handlerFor(spec.kind) as JobHandler<P>), { yieldFirst: true })
      : runInWorker("writer", "job", file, { jobId: job.id, spec }).then(
          () => {},
          (error: unknown) => markFailed(db, job.id, error),
        );
  running.set(job.id, promise);
  void promise.finally(() => running.delete(job.id));
  return { jobId: job.id, total: spec.total };
}

/** A worker thread that died (memory, crash) leaves its job to be marked here. */
function markFailed(db: Db, jobId: number, error: unknown) {
  const message = `Stopped: ${error instanceof Error ? error.message : String(error)}`;
  console.error(`Job ${jobId} failed`, error);
  db.update(jobs).set({ status: "failed", message, finishedAt: new Date() }).where(eq(jobs.id, jobId)).run();
}

/** Runs a job in this thread (the worker's, or the server's for tests): status, progress, closing message. */
export async function runJobHere<P extends Record<string, unknown>>(
  db: Db,
  jobId: number,
  spec: JobSpec<P>,
  handler: JobHandler<P>,
  options: { yieldFirst?: boolean } = {},
) {
  let done = 0;
  const report = (n: number, message?: string) => {
    done = n;
    db.update(jobs)
      .set({ progress: n, ...(message === undefined ? {} : { message }) })
      .where(eq(jobs.id, jobId))
      .run();
  };
  const ctx: JobContext<P> = {
    db,
    jobId,
    params: spec.params,
    actorId: spec.actorId,
    total: spec.total,
    report,
    async inChunks(items, size, fn) {
      for (let i = 0; i < items.length; i += size) {
        fn(items.slice(i, i + size));
        report(Math.min(i + size, items.length));
        await nextTick();
      }
    },
  };
  try {
    // Let the request that started the job finish before any work is done.
    if (options.yieldFirst) await nextTick();
    db.update(jobs).set({ status: "running" }).where(eq(jobs.id, jobId)).run();
    const message = await handler(ctx);
    db.update(jobs)
      .set({ status: "done", progress: spec.total, message, finishedAt: new Date() })
      .where(eq(jobs.id, jobId))
      .run();
  } catch (error) {
    const message = `Stopped after ${done} of ${spec.total}: ${error instanceof Error ? error.message : String(error)}`;
    console.error(`Job ${jobId} failed`, error);
    try {
      db.update(jobs).set({ status: "failed", message, finishedAt: new Date() }).where(eq(jobs.id, jobId)).run();
    } catch {
      // The database itself is gone (e.g. closed during shutdown); nothing more to record.
    }
  }
}

/**
 * A job whose work runs elsewhere as one transaction (an upload commit in the writer thread). Its row
 * is written before and after; progress in between is kept in this process (no other connection can
 * read a row written inside that transaction) and shown through getJob. Resolves with the work's
 * result; a throw marks the job failed with the error's message and is thrown again.
 */
export async function runTrackedJob<T>(
  db: Db,
  spec: { kind: string; total: number; params: Record<string, unknown>; actorId: number | null },
  work: (report: (done: number, message?: string) => void) => Promise<T>,
  describe: (result: T) => string,
): Promise<T> {
  // Its row is written by the server's thread while the writer thread may hold the lock for another
  // commit: waited for without holding up the thread (decision 020).
  const job = await writeWhenFree(db, () =>
    db
      .insert(jobs)
      .values({
        kind: spec.kind,
        status: "running",
        progress: 0,
        total: spec.total,
        params: spec.params,
        createdBy: spec.actorId,
      })
      .returning({ id: jobs.id })
      .get(),
  );
  let settle!: () => void;
  running.set(job.id, new Promise<void>((resolve) => (settle = resolve)));
  live.set(job.id, { progress: 0 });
  try {
    const result = await work((done, message) => live.set(job.id, { progress: done, message }));
    await writeWhenFree(db, () =>
      db
        .update(jobs)
        .set({ status: "done", progress: spec.total, message: describe(result), finishedAt: new Date() })
        .where(eq(jobs.id, job.id))
        .run(),
    );
    return result;
  } catch (error) {
    const message = error instanceof Error ? error.message : String(error);
    await writeWhenFree(db, () =>
      db.update(jobs).set({ status: "failed", message, finishedAt: new Date() }).where(eq(jobs.id, job.id)).run(),
    );
    throw error;
  } finally {
    live.delete(job.id);
    running.delete(job.id);
    settle();
  }
}

/** The newest job of `kind` a person started with this ticket (a value their page chose), as getJob shows it. */
export function jobByTicket(db: Db, kind: string, userId: number, ticket: string): JobView | null {
  const row = db.$client
    .prepare(
      "select id from jobs where kind = ? and created_by = ? and json_extract(params, '$.ticket') = ? order by id desc limit 1",
    )
    .get(kind, userId, ticket) as { id: number } | undefined;
  return row ? getJob(db, row.id) : null;
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
    createdBy: row.createdBy,
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
  const now = live.get(id);
  if (now && row.status === "running") return view({ ...row, progress: now.progress, message: now.message ?? row.message });
  // A job this process does not run was cut off by a restart. Shown so here; written so at the next
  // start (markInterruptedJobs): a GET never writes (decision 018).
  if ((row.status === "queued" || row.status === "running") && !running.has(id)) {
    return view({ ...row, status: "failed", message: interruptedMessage(row), finishedAt: row.finishedAt ?? new Date() });
  }
  return view(row);
}

const interruptedMessage = (row: { progress: number; total: number }) =>
  `Interrupted by a server restart after ${row.progress} of ${row.total}; start it again to finish.`;

/** At start, before any job runs: jobs a restart cut off (still queued or running) are recorded as failed. */
export function markInterruptedJobs(db: Db): number {
  const cut = db.$client.prepare("select id, progress, total from jobs where status in ('queued', 'running')").all() as {
    id: number;
    progress: number;
    total: number;
  }[];
  for (const row of cut.filter((r) => !running.has(r.id))) {
    db.update(jobs)
      .set({ status: "failed", message: interruptedMessage(row), finishedAt: new Date() })
      .where(eq(jobs.id, row.id))
      .run();
  }
  return cut.length;
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

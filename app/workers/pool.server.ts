// Work off the request thread. Two pools of worker threads, each thread with its own SQLite
// connection (WAL: readers on the server's connection are never blocked by a writer here):
//   "writer" — one thread, so writes never wait on each other: background jobs, commits, API submissions;
//   "intake" — one thread for reading untrusted files and large calculations, each task with a time limit.
// A task that runs past its time limit, or past the thread's memory limit, ends its thread (and with
// it any open transaction, which SQLite rolls back); the pool starts a fresh one.

import { existsSync } from "node:fs";
import { MessageChannel } from "node:worker_threads";
import path from "node:path";
import { Piscina } from "piscina";
import type { Db } from "#app/db/client.server.ts";
import { env } from "#app/utils/env.server.ts";
import type { TaskName, TaskPayload, TaskResult, TaskOutcome } from "#app/workers/tasks.server.ts";

export type PoolName = "writer" | "intake";

/** A task that ran out of time (or memory): its thread was stopped. */
export class TaskStopped extends Error {
  constructor(
    message: string,
    readonly reason: "time" | "memory" | "crash",
  ) {
    super(message);
  }
}

/** An error thrown in the worker, carried back by name so callers can tell their own kinds apart. */
export class WorkerError extends Error {
  constructor(
    message: string,
    readonly errorName: string,
    readonly status: number | undefined,
    readonly details: unknown,
  ) {
    super(message);
  }
}

const pools = new Map<PoolName, Piscina>();

/**
 * The file a thread starts from: in production the bundle `vite build` makes (app/workers/vite-plugin.ts),
 * which needs no TypeScript loader; elsewhere (dev server, tests, scripts) the sources through tsx.
 */
export function workerEntry(): { filename: string; name: string } {
  const bundle = path.resolve(process.cwd(), "build/workers/entry.js");
  if (process.env.NODE_ENV === "production") {
    if (existsSync(bundle)) return { filename: bundle, name: "runTask" };
    console.warn(`${bundle} is missing (run the build); worker threads load the TypeScript sources instead.`);
  }
  return { filename: path.resolve(process.cwd(), "app/workers/entry.js"), name: "default" };
}

function poolFor(name: PoolName, warm = false): Piscina {
  let pool = pools.get(name);
  if (!pool) {
    pool = new Piscina({
      ...workerEntry(),
      // A warm server keeps one thread per pool ready; elsewhere (tests, scripts) threads come and go.
      minThreads: warm ? 1 : 0,
      maxThreads: 1,
      idleTimeout: 60_000,
      // Untrusted files are read in the intake pool: a bomb runs out of this heap, not the server's.
      resourceLimits:
        name === "intake"
          ? { maxOldGenerationSizeMb: env().INTAKE_HEAP_MB, maxYoungGenerationSizeMb: Math.min(64, env().INTAKE_HEAP_MB / 4) }
          : undefined,
      env: process.env as Record<string, string>,
    });
    pools.set(name, pool);
  }
  return pool;
}

/** Starts one thread per pool now (the server, at start), so the first task does not wait for one. */
export function warmWorkers(): void {
  poolFor("writer", true);
  poolFor("intake", true);
}

/** The database file a task's thread opens; null for an in-memory database (work stays in this thread). */
export function databaseFileOf(db: Db): string | null {
  const client = db.$client;
  return client.memory ? null : path.resolve(client.name);
}

export type RunOptions = {
  /** Stop the task (and its thread) after this many milliseconds. */
  timeoutMs?: number;
  /** Called with progress the task reports. */
  onProgress?: (done: number, message?: string) => void;
  /** Called with each piece of an answer the task sends as it goes (in order). */
  onPiece?: (piece: string) => void;
  /**
   * Asked when the time limit stopped the task: was its work done all the same? A stop can land
   * just after a transaction committed, before the thread's answer came back. Answer the task's
   * result, read from what it left in the database, or undefined when nothing was done; only
   * undefined is reported as a stop.
   */
  ifStopped?: () => Promise<unknown>;
};

/** Runs a task in a worker thread and resolves with its result; errors thrown there are re-thrown as WorkerError. */
export async function runInWorker<N extends TaskName>(
  pool: PoolName,
  task: N,
  dbFile: string | null,
  payload: TaskPayload<N>,
  options: RunOptions = {},
): Promise<TaskResult<N>> {
  const { port1, port2 } = new MessageChannel();
  const controller = new AbortController();
  let timer: NodeJS.Timeout | undefined;
  let ended!: () => void;
  const portEnded = new Promise<void>((resolve) => (ended = resolve));
  port1.on("message", (m: { started?: true; done?: number; message?: string; piece?: string; end?: true }) => {
    // The time limit counts from the moment the task starts in its thread, not from the queue or start-up.
    if (m.end) {
      ended();
    } else if (m.started) {
      if (options.timeoutMs) timer = setTimeout(() => controller.abort(), options.timeoutMs);
    } else if (m.piece !== undefined) {
      options.onPiece?.(m.piece);
    } else if (options.onProgress && m.done !== undefined) {
      options.onProgress(m.done, m.message);
    }
  });
  let outcome: TaskOutcome;
  try {
    outcome = await poolFor(pool).run(
      { task, dbFile, payload, port: port2 },
      { transferList: [port2], signal: controller.signal },
    );
    // The answer and the port's messages travel apart: wait for the port's last one.
    await Promise.race([portEnded, new Promise((resolve) => setTimeout(resolve, 5_000).unref())]);
  } catch (error) {
    if (controller.signal.aborted) {
      const done = options.ifStopped ? await options.ifStopped() : undefined;
      if (done !== undefined) return done as TaskResult<N>;
      const ms = options.timeoutMs!;
      throw new TaskStopped(`Stopped after ${ms >= 1000 ? `${Math.round(ms / 1000)} s` : `${ms} ms`}.`, "time");
    }
    const message = error instanceof Error ? error.message : String(error);
    if (/ERR_WORKER_OUT_OF_MEMORY|out of memory/i.test(message)) {
      throw new TaskStopped("Stopped: it needed more memory than one task may use.", "memory");
    }
    throw new TaskStopped(`The worker stopped: ${message}`, "crash");
  } finally {
    clearTimeout(timer);
    port1.close();
  }
  if (!outcome.ok) throw new WorkerError(outcome.error.message, outcome.error.name, outcome.error.status, outcome.error.details);
  return outcome.value as TaskResult<N>;
}

/** Ends the pools' threads (tests, shutdown). */
export async function closeWorkers(): Promise<void> {
  const all = [...pools.values()];
  pools.clear();
  await Promise.all(all.map((p) => p.destroy()));
}

// What a worker thread can be asked to do (see pool.server.ts). Each task gets the thread's own
// connection to the database file it names, and a port to report progress on. Runs only in
// worker threads; the server calls these through runInWorker().

import { statSync } from "node:fs";
import type { MessagePort } from "node:worker_threads";
import { type Db, openDatabase, setDb } from "#app/db/client.server.ts";
import type { JobHandler, JobSpec } from "#app/models/jobs.server.ts";
import type { CommitMode } from "#app/models/submission/uploads/commit.server.ts";
import { env } from "#app/utils/env.server.ts";
import { lowerThreadPriority } from "#app/workers/thread-priority.server.ts";

// Background work yields the CPU to the server's thread when both want it (thread-priority.server.ts).
lowerThreadPriority(env().WORKER_NICE);

// Each task imports what it needs when it first runs, so a thread loads only its own tasks' modules.

type Progress = (done: number, message?: string) => void;
/** Sends a piece of the task's answer to the server as soon as it is ready (see RunOptions.onPiece). */
type Send = (piece: string) => void;

const tasks = {
  /** A background job of a registered kind (models/jobs.server.ts), with progress in the jobs table. */
  async job(db: Db, p: { jobId: number; spec: JobSpec<Record<string, unknown>> }) {
    const { runJobHere } = await import("#app/models/jobs.server.ts");
    const { handlerFor } = await import("#app/models/job-handlers.server.ts");
    await runJobHere(db, p.jobId, p.spec, handlerFor(p.spec.kind) as JobHandler<Record<string, unknown>>);
    return null;
  },
  /**
   * An upload's commit: one transaction, all or nothing. `pauseAfterCommitMs` keeps the thread busy
   * that long after the commit (tests of a time limit that lands just after a commit).
   */
  async commitUpload(
    db: Db,
    p: { batchId: number; mode: CommitMode; userId: number; ip: string | null; pauseAfterCommitMs?: number },
    progress: Progress,
  ) {
    const { getBatchById } = await import("#app/models/submission/uploads/batches.server.ts");
    const { commitUpload } = await import("#app/models/submission/uploads/commit.server.ts");
    const batch = getBatchById(db, p.batchId);
    if (!batch) throw new Error("The upload is gone.");
    const result = commitUpload(
      db,
      batch,
      p.mode,
      { userId: p.userId },
      {
        ip: p.ip,
        afterRow: (i) => {
          if ((i + 1) % 100 === 0) progress(i + 1, "Writing rows");
        },
        onPhase: (message, done) => progress(done, message),
      },
    );
    if (p.pauseAfterCommitMs) Atomics.wait(new Int32Array(new SharedArrayBuffer(4)), 0, 0, p.pauseAfterCommitMs);
    return result;
  },
  /** Rows sent as JSON to the API: validated, then written in one transaction or not at all. */
  async submitJsonRows(db: Db, p: { items: unknown[]; userId: number; ip: string | null }) {
    const { submitJsonRows } = await import("#app/models/submission/uploads/commit.server.ts");
    return submitJsonRows(db, p.items, { userId: p.userId }, { ip: p.ip });
  },
  /** Calibrates the items of a large request and sends the answer's JSON in pieces; nothing is stored. */
  async calibrate(db: Db, p: { items: unknown[]; density: boolean }, _progress: Progress, send: Send) {
    const { calibrationPieces } = await import("#app/models/calibration/calibrate-work.server.ts");
    for (const piece of calibrationPieces(db, p.items, { density: p.density })) send(piece);
    return null;
  },
  /** Reads an uploaded spreadsheet (with the reader's limits), validates it and stores it as a batch. */
  async createUpload(db: Db, p: { path: string; fileName: string; userId: number }) {
    const { createUpload } = await import("#app/models/submission/uploads/batches.server.ts");
    const { batch, validation } = await createUpload(db, { userId: p.userId, fileName: p.fileName, path: p.path });
    return {
      publicId: batch.publicId,
      rows: validation.results.length,
      validCount: validation.validCount,
      errors: validation.errors,
      warnings: validation.warnings,
    };
  },
  /** A slice of the calibration page's sheet: summaries with sparklines (see calibrate-page.server.ts); nothing stored. */
  async calibrateForPage(db: Db, p: { items: unknown[] }) {
    const { calibrateForPage } = await import("#app/models/calibration/calibrate-page.server.ts");
    return calibrateForPage(db, p.items);
  },
  /** Reads a spreadsheet file with the reader's limits into its header and rows; stores nothing (calibration page). */
  async readSheet(_db: Db | null, p: { path: string; fileName: string }) {
    const { readFile } = await import("node:fs/promises");
    const { readUpload } = await import("#app/models/submission/uploads/read-sheet.server.ts");
    return readUpload(await readFile(p.path), p.fileName);
  },
};

export type TaskName = keyof typeof tasks;
export type TaskPayload<N extends TaskName> = Parameters<(typeof tasks)[N]>[1];
export type TaskResult<N extends TaskName> = Awaited<ReturnType<(typeof tasks)[N]>>;
export type TaskOutcome =
  { ok: true; value: unknown } | { ok: false; error: { name: string; message: string; status?: number; details?: unknown } };

const connections = new Map<string, { db: Db; ino: number; dev: number }>();
const WORKER_BUSY_TIMEOUT_MS = 120_000;

/** The thread's connection to `file`, opened again when the file was replaced (restored, copied over). */
function connection(file: string): Db {
  const { ino, dev } = statSync(file);
  let entry = connections.get(file);
  if (!entry || entry.ino !== ino || entry.dev !== dev || !entry.db.$client.open) {
    if (entry?.db.$client.open) entry.db.$client.close();
    entry = { db: openDatabase(file), ino, dev };
    // A worker thread may wait for the write lock as long as another thread's commit holds it (a
    // 5,000-row commit held it ~9 s on the shared machine): waiting here holds up no request but its own.
    entry.db.$client.pragma(`busy_timeout = ${WORKER_BUSY_TIMEOUT_MS}`);
    connections.set(file, entry);
  }
  // Code that asks getDb() in this thread gets the task's database.
  setDb(entry.db);
  return entry.db;
}

export async function runTask(message: { task: TaskName; dbFile: string | null; payload: unknown; port: MessagePort }) {
  const { task, dbFile, payload, port } = message;
  const progress: Progress = (done, text) => port.postMessage({ done, message: text });
  const send: Send = (piece) => port.postMessage({ piece });
  // The time limit counts from here, not from the thread's start-up.
  port.postMessage({ started: true });
  try {
    const db = dbFile ? connection(dbFile) : null;
    const fn = tasks[task] as (db: Db | null, p: unknown, progress: Progress, send: Send) => unknown;
    const value = await fn(db, payload, progress, send);
    return { ok: true, value } satisfies TaskOutcome;
  } catch (error) {
    const e = error as Error & { status?: number; problems?: unknown };
    return {
      ok: false,
      error: {
        name: e?.constructor?.name ?? "Error",
        message: e?.message ?? String(error),
        status: e?.status,
        details: e?.problems,
      },
    } satisfies TaskOutcome;
  } finally {
    // The last message on the port: the server waits for it, so no piece is still on its way.
    port.postMessage({ end: true });
    port.close();
  }
}

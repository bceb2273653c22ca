import type { Db } from "#app/db/client.server.ts";

/*
 * Writes the server's own thread must make during a request (a session at sign-in, its end at
 * sign-out), without freezing the thread while the writer thread holds the write lock (decision 020).
 *
 * better-sqlite3 waits for a busy lock synchronously (busy_timeout on the connection): while a
 * long commit held the lock, a sign-in stopped every request of the server for up to 5 s and then
 * failed. Here the write is tried with busy_timeout 0; when the lock is taken, the request waits
 * asynchronously (the thread serves others meanwhile) and tries again, until `waitMs` has passed.
 */

/** How long a request waits for the write lock in all, by default. */
export const WRITE_WAIT_MS = 30_000;

/** The database was busy past the wait: the request may be refused with a 503 (`status`). */
export class WriteLockBusy extends Error {
  readonly status = 503;
  constructor(waitedMs: number) {
    super(`The registry is busy with a large write; please try again in a moment (waited ${Math.round(waitedMs / 1000)} s).`);
  }
}

/** Whether `error` (or what it wraps) is SQLite saying another connection holds the lock. */
export function isBusy(error: unknown): boolean {
  for (
    let e = error as { code?: unknown; cause?: unknown } | undefined, depth = 0;
    e && depth < 4;
    e = e.cause as typeof e, depth++
  ) {
    if (typeof e.code === "string" && (e.code.startsWith("SQLITE_BUSY") || e.code.startsWith("SQLITE_LOCKED"))) return true;
  }
  return false;
}

/**
 * Runs `write` as one transaction that takes the write lock at its start (BEGIN IMMEDIATE). It never
 * waits synchronously: while another connection holds the lock, it waits between tries (2 ms, then
 * longer, at most 50 ms apart) without holding up the thread. `write` itself is synchronous, so
 * nothing else on this thread runs inside the transaction.
 */
export async function writeWhenFree<T>(db: Db, write: () => T, options: { waitMs?: number } = {}): Promise<T> {
  const sqlite = db.$client;
  const started = performance.now();
  const waitMs = options.waitMs ?? WRITE_WAIT_MS;
  const tx = sqlite.transaction(write);
  for (let pause = 2; ; pause = Math.min(pause * 2, 50)) {
    const saved = sqlite.pragma("busy_timeout", { simple: true }) as number;
    sqlite.pragma("busy_timeout = 0");
    try {
      return tx.immediate();
    } catch (error) {
      if (!isBusy(error)) throw error;
    } finally {
      sqlite.pragma(`busy_timeout = ${saved}`);
    }
    const waited = performance.now() - started;
    if (waited >= waitMs) throw new WriteLockBusy(waited);
    await new Promise((resolve) => setTimeout(resolve, Math.min(pause, waitMs - waited)));
  }
}

/*
 * Pages' and the API's write requests (forms, reviews, admin) write on the server's thread through
 * plain synchronous statements; while the writer thread holds the lock (a 5,000-row commit, a check
 * run) such a write would stop the whole thread for up to busy_timeout and then fail. So a write
 * request first waits, asynchronously, until the lock is free (root.tsx's middleware), and only
 * then runs its action. A writer that takes the lock in the moment between is still waited for
 * synchronously, as before; the long waits are gone.
 */

/** Resolves once no other connection holds the write lock (taking it for an empty moment to know). */
export async function untilWritable(db: Db, options: { waitMs?: number } = {}): Promise<void> {
  await writeWhenFree(db, () => undefined, options);
}

/** Requests that never write on the server's thread: calculations answered without storing anything. */
const NO_WRITES = [/^\/calibrate(\/|$)/, /^\/api\/v1\/calibrate$/];

/** Whether a request may write on the server's thread (anything but GET and HEAD, outside NO_WRITES). */
export function mayWrite(request: Request): boolean {
  if (request.method === "GET" || request.method === "HEAD") return false;
  const { pathname } = new URL(request.url);
  return !NO_WRITES.some((re) => re.test(pathname));
}

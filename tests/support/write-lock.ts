// Holds a database's write lock from another process, as the writer thread does during a long
// commit, so a test can see what this thread does meanwhile. The lock is held by a child process:
// a connection on this thread could not let go while this thread waits synchronously on SQLite.
import { spawn } from "node:child_process";

export type HeldLock = { released: Promise<void> };

/** Takes the write lock of `file` (BEGIN IMMEDIATE) in a child process, holds it `ms`, then rolls back. */
export async function holdWriteLock(file: string, ms: number): Promise<HeldLock> {
  const code = `
    const db = new (require("better-sqlite3"))(process.argv[1]);
    db.exec("begin immediate");
    process.stdout.write("held\\n");
    setTimeout(() => { db.exec("rollback"); db.close(); process.stdout.write("free\\n"); }, Number(process.argv[2]));
  `;
  const child = spawn(process.execPath, ["-e", code, file, String(ms)], { stdio: ["ignore", "pipe", "inherit"] });
  let out = "";
  let held!: () => void;
  let fail!: (e: Error) => void;
  const isHeld = new Promise<void>((resolve, reject) => ((held = resolve), (fail = reject)));
  child.stdout.on("data", (d: Buffer) => {
    out += d.toString();
    if (out.includes("held")) held();
  });
  const released = new Promise<void>((resolve) => child.on("exit", () => resolve()));
  child.on("exit", (status) => fail(new Error(`the lock holder ended (${status}) before it held the lock`)));
  await isHeld;
  return { released };
}

/** Runs `work` and measures the longest stretch this thread's event loop did not turn meanwhile. */
export async function longestPause<T>(work: () => Promise<T>): Promise<{ value: T; pauseMs: number; ms: number }> {
  let last = performance.now();
  let pauseMs = 0;
  const tick = setInterval(() => {
    const now = performance.now();
    pauseMs = Math.max(pauseMs, now - last);
    last = now;
  }, 10);
  const t0 = performance.now();
  try {
    const value = await work();
    pauseMs = Math.max(pauseMs, performance.now() - last);
    return { value, pauseMs, ms: performance.now() - t0 };
  } finally {
    clearInterval(tick);
  }
}

import { readlinkSync } from "node:fs";
import os from "node:os";

/*
 * Worker threads do background work: commits, check runs, recalibration, scoring, reading untrusted
 * files. On a machine with few cores, a thread at full speed takes CPU time the server's own thread
 * needs to answer pages, and every reader waits. So each worker thread lowers its own scheduling
 * priority (Linux "nice", per thread): when both want a core, requests go first; when the server is
 * idle the background work still gets every free cycle. WORKER_NICE (default 10, 0 to leave it) sets
 * how far. Only the thread's own priority changes: Linux keeps one per thread (setpriority on the
 * thread id); elsewhere, or when refused, the thread keeps the process's priority.
 */

/** This thread's kernel id (Linux), or null where there is none to find. */
export function currentThreadId(): number | null {
  try {
    const tid = Number(readlinkSync("/proc/thread-self").split("/").pop());
    return Number.isInteger(tid) && tid > 0 ? tid : null;
  } catch {
    return null;
  }
}

/** Lowers this thread's priority to `nice` (never raises it); answers the priority it now has, or null. */
export function lowerThreadPriority(nice: number): number | null {
  const tid = currentThreadId();
  if (tid === null || !(nice > 0)) return null;
  try {
    if (os.getPriority(tid) < nice) os.setPriority(tid, Math.min(19, Math.round(nice)));
    return os.getPriority(tid);
  } catch {
    return null;
  }
}

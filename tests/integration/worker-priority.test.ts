import fs from "node:fs";
import { afterAll, expect, it } from "vitest";
import { closeWorkers, runInWorker } from "#app/workers/pool.server.ts";
import { currentThreadId } from "#app/workers/thread-priority.server.ts";

/*
 * Worker threads lower their own CPU priority (WORKER_NICE, default 10) so the server's thread goes
 * first when both want a core; the server's own thread keeps its priority. Read from the kernel's
 * view of this process's threads (Linux /proc).
 */

afterAll(() => closeWorkers());

/** Nice value of each thread of this process, by thread id. */
function threadNice(): Map<number, number> {
  const out = new Map<number, number>();
  for (const tid of fs.readdirSync("/proc/self/task")) {
    try {
      const stat = fs.readFileSync(`/proc/self/task/${tid}/stat`, "utf8");
      out.set(Number(tid), Number(stat.slice(stat.lastIndexOf(")") + 2).split(" ")[16]));
    } catch {
      // the thread ended while we looked
    }
  }
  return out;
}

it.runIf(fs.existsSync("/proc/thread-self"))(
  "a worker thread runs at nice 10; the server's thread keeps its priority",
  async () => {
    const main = currentThreadId()!;
    const before = threadNice();
    const mainNice = before.get(main)!;
    expect(mainNice).toBeLessThan(10);
    const niceBefore = [...before.values()].filter((n) => n >= 10).length;

    // Any task starts a thread of the intake pool; a tiny sheet is the cheapest.
    const file = `${process.env.DATABASE_URL ?? "/tmp"}.priority.csv`;
    fs.writeFileSync(file, "a,b\n1,2\n");
    try {
      await runInWorker("intake", "readSheet", null, { path: file, fileName: "tiny.csv" });
    } finally {
      fs.rmSync(file, { force: true });
    }
    const after = threadNice();
    expect(after.get(main)).toBe(mainNice);
    expect([...after.values()].filter((n) => n >= 10).length).toBeGreaterThan(niceBefore);
  },
);

import { afterAll, describe, expect, it } from "vitest";
import Database from "better-sqlite3";
import { getDb } from "#app/db/client.server.ts";
import { commitUpload } from "#app/models/submission/uploads/commit.server.ts";
import { getBatchForUser } from "#app/models/submission/uploads/batches.server.ts";
import * as commitApi from "#app/routes/api/v1/uploads.commit.ts";
import * as determinationsApi from "#app/routes/api/v1/determinations.ts";
import { commitInWriter } from "#app/models/submission/uploads/off-thread.server.ts";
import { closeWorkers, TaskStopped } from "#app/workers/pool.server.ts";
import { args, get, ORIGIN, run } from "#tests/support/auth.ts";
import { uploadRows } from "#tests/support/upload-files.ts";
import { contributorWithToken, determinationCount, uploadedSheet } from "#tests/support/api-uploads.ts";

/*
 * Issue 14, item 11: long writes no longer block readers. A 5,000-row commit blocked every request
 * for 4 s, because it ran on the server's thread. Now commits and API submissions run in a worker
 * thread with its own connection, one transaction each: this thread keeps answering while the
 * rows are written, and a commit stopped midway leaves nothing behind.
 */

afterAll(() => closeWorkers());

/** Runs `work` while timing the longest pause of this thread's event loop and answering GETs. */
async function whileReading<T>(work: () => Promise<T>, token: string) {
  let last = performance.now();
  let pauseMs = 0;
  const timer = setInterval(() => {
    const now = performance.now();
    pauseMs = Math.max(pauseMs, now - last);
    last = now;
  }, 20);
  let reads = 0;
  let working = true;
  const reader = (async () => {
    while (working) {
      const res = await run(() =>
        determinationsApi.loader(
          args(get("/api/v1/determinations?per_page=5", { headers: { Authorization: `Bearer ${token}` } })),
        ),
      );
      expect(res.status).toBe(200);
      reads++;
      await new Promise((r) => setTimeout(r, 200));
    }
  })();
  try {
    const result = await work();
    return { result, pauseMs, reads };
  } finally {
    working = false;
    clearInterval(timer);
    await reader;
  }
}

describe("case 11: commits run off the request thread, all or nothing", () => {
  it("a 5,000-row commit: this thread keeps answering GETs while it is written", { timeout: 240_000 }, async () => {
    const person = contributorWithToken();
    const id = await uploadedSheet(5000, "ZW1Q", person.token);
    const before = determinationCount();
    const commit = new Request(`${ORIGIN}/api/v1/uploads/${id}/commit`, {
      method: "POST",
      body: JSON.stringify({ mode: "all" }),
      headers: { "Content-Type": "application/json", Authorization: `Bearer ${person.token}` },
    });
    const { result, pauseMs, reads } = await whileReading(
      () => run(() => commitApi.action(args(commit, { uploadId: id }))),
      person.token,
    );
    expect(result.status).toBe(200);
    expect((result.data as { committed: number }).committed).toBe(5000);
    expect(determinationCount()).toBe(before + 5000);
    // Before, the thread stopped for the whole commit (≈ 4 s) and no GET was answered meanwhile.
    expect(reads).toBeGreaterThan(1);
    expect(pauseMs).toBeLessThan(1500);
  });

  it(
    "a commit stopped at any point leaves the registry as it was (one transaction per commit), and is reported truly",
    { timeout: 240_000 },
    async () => {
      const person = contributorWithToken();
      for (const [i, stopAfterMs] of [50, 400, 1200].entries()) {
        const id = await uploadedSheet(600, `ZW${i + 2}Q`, person.token);
        const batch = getBatchForUser(getDb(), id, person.id)!;
        const before = determinationCount();
        const outcome = await commitInWriter(getDb(), batch, "all", { userId: person.id }, { timeoutMs: stopAfterMs }).then(
          (r) => `committed ${r.committed}`,
          (e: unknown) => (e instanceof TaskStopped ? "stopped" : e),
        );
        const after = determinationCount();
        const status = getBatchForUser(getDb(), id, person.id)!.status;
        // All or nothing, and the report says which: a stop that lands just after the transaction
        // committed is reported as the commit it was.
        expect([
          ["stopped", before, "parsed"],
          ["committed 600", before + 600, "committed"],
        ]).toContainEqual([outcome, after, status]);
      }
    },
  );

  it(
    "a time limit that lands just after the commit reports the commit, with its rows, not a stop",
    { timeout: 240_000 },
    async () => {
      const person = contributorWithToken();
      const id = await uploadedSheet(200, "ZW6Q", person.token);
      const batch = getBatchForUser(getDb(), id, person.id)!;
      const before = determinationCount();
      // The thread commits, then is held busy past the time limit, so the limit stops it after the commit.
      const result = await commitInWriter(
        getDb(),
        batch,
        "all",
        { userId: person.id },
        { timeoutMs: 8_000, pauseAfterCommitMs: 60_000 },
      );
      expect(result.committed).toBe(200);
      expect(determinationCount()).toBe(before + 200);
      const ids = getDb()
        .$client.prepare("select id from determinations where upload_batch_id = ? order by id")
        .pluck()
        .all(batch.id);
      expect(result.determinationIds).toEqual(ids);
      expect(result.createdSiteIds.length).toBeGreaterThan(0);
      expect(getBatchForUser(getDb(), id, person.id)!.status).toBe("committed");
    },
  );

  it("a 2,000-row JSON submission is written off the thread too, in the order sent", { timeout: 240_000 }, async () => {
    const person = contributorWithToken();
    const rows = uploadRows(2000, { prefix: "ZW9Q" });
    const before = determinationCount();
    const request = new Request(`${ORIGIN}/api/v1/determinations`, {
      method: "POST",
      body: JSON.stringify(rows),
      headers: { "Content-Type": "application/json", Authorization: `Bearer ${person.token}` },
    });
    const { result, pauseMs } = await whileReading(() => run(() => determinationsApi.action(args(request))), person.token);
    expect(result.status).toBe(201);
    const ids = (result.data as { determination_ids: number[] }).determination_ids;
    expect(ids).toHaveLength(2000);
    expect([...ids].sort((a, b) => a - b)).toEqual(ids);
    expect(determinationCount()).toBe(before + 2000);
    expect(pauseMs).toBeLessThan(1500);
  });
});

describe("a commit holds the write lock only while it writes", () => {
  it("its rows are checked again before the lock is taken, and once more under it when the registry changed meanwhile", async () => {
    const person = contributorWithToken();
    const other = new Database(getDb().$client.name);
    other.pragma("busy_timeout = 0");
    const lockFree = () => {
      try {
        other.exec("begin immediate");
        other.exec("rollback");
        return true;
      } catch {
        return false;
      }
    };
    try {
      for (const [i, changeMeanwhile] of [false, true].entries()) {
        const id = await uploadedSheet(30, `ZL${i}Q`, person.token);
        const batch = getBatchForUser(getDb(), id, person.id)!;
        const phases: [string, boolean][] = [];
        const result = commitUpload(
          getDb(),
          batch,
          "all",
          { userId: person.id },
          {
            onPhase: (message) => {
              phases.push([message, lockFree()]);
              // Another connection commits while the rows are being checked the first time.
              if (changeMeanwhile && phases.length === 1)
                other.prepare("insert into rate_limits values (?, 1, 1)").run(`probe:${i}`);
            },
          },
        );
        expect(result.committed).toBe(30);
        // The first check runs with the lock free; the second (only after a change) and the writing hold it.
        expect(phases).toEqual([
          ["Checking the rows again", true],
          ...(changeMeanwhile ? [["Checking the rows again (the registry changed meanwhile)", false] as [string, boolean]] : []),
          ["Calibrating and checking 30 determinations", false],
        ]);
      }
    } finally {
      other.close();
    }
  });
});

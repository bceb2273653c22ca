import { mkdtempSync, readdirSync, rmSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { getDb } from "#app/db/client.server.ts";
import { createToken } from "#app/models/accounts/tokens.server.ts";
import * as uploadsApi from "#app/routes/api/v1/uploads.ts";
import { closeWorkers } from "#app/workers/pool.server.ts";
import { createTestUser } from "#tests/factories.ts";
import { args, ORIGIN, run } from "#tests/support/auth.ts";
import { emptyRowsXlsx, zipBombXlsx } from "#tests/support/xlsx-bombs.ts";

/*
 * Issue 14, item 8: spreadsheet bombs. A small workbook that unpacks to hundreds of megabytes, and
 * one with a million empty rows, froze every request for about a minute before (the server read
 * them on its own thread, unbounded). Now the zip is counted as it unpacks (limits on expanded
 * size, rows and cells), in a worker thread with a time limit: a 400 with the reason, nothing
 * kept, and the server's thread free meanwhile.
 */

let tempRoot: string;
const savedTmp = process.env.TMPDIR;
beforeAll(() => {
  tempRoot = mkdtempSync(join(tmpdir(), "bombs-"));
  process.env.TMPDIR = tempRoot;
});
afterAll(async () => {
  process.env.TMPDIR = savedTmp;
  rmSync(tempRoot, { recursive: true, force: true });
  await closeWorkers();
});

const batches = () => getDb().$client.prepare("select count(*) from upload_batches").pluck().get() as number;

function upload(file: Buffer, name: string, token: string) {
  const body = new FormData();
  body.append("file", new Blob([new Uint8Array(file)]), name);
  return new Request(`${ORIGIN}/api/v1/uploads`, { method: "POST", body, headers: { Authorization: `Bearer ${token}` } });
}

/** Runs `work` while timing the longest pause of this thread's event loop. */
async function longestPause<T>(work: () => Promise<T>): Promise<{ result: T; pauseMs: number }> {
  let last = performance.now();
  let pauseMs = 0;
  const timer = setInterval(() => {
    const now = performance.now();
    pauseMs = Math.max(pauseMs, now - last);
    last = now;
  }, 20);
  try {
    return { result: await work(), pauseMs };
  } finally {
    clearInterval(timer);
  }
}

describe("case 8: spreadsheet bombs are refused with a 400, nothing kept, the server's thread free", () => {
  const cases: [string, () => Buffer, RegExp][] = [
    ["a zip bomb (≈ 120 KB unpacking to 120 MB)", () => zipBombXlsx(120), /expands to more than 100 MB when unpacked/],
    [
      "1,000,000 empty rows",
      () => emptyRowsXlsx(1_000_000),
      /has more than 50,100 rows \(empty rows with formatting count too\)/,
    ],
  ];
  it.each(cases)("%s", async (_what, make, message) => {
    const user = createTestUser(getDb(), ["contributor"]);
    const token = createToken(getDb(), user.id, "test", { actorId: user.id }).token;
    const file = make();
    expect(file.length).toBeLessThan(10 * 1024 * 1024);
    const before = batches();
    const { result: res, pauseMs } = await longestPause(() =>
      run(() => uploadsApi.action(args(upload(file, "bomb.xlsx", token)))),
    );
    expect(res.status).toBe(400);
    expect((res.data as { error: string }).error).toMatch(message);
    expect(batches()).toBe(before);
    expect(readdirSync(tempRoot).filter((n) => n.startsWith("thawline-"))).toEqual([]);
    // The work happened in a worker thread: this thread never stopped for long (it did for ~a minute before).
    expect(pauseMs).toBeLessThan(3000);
  });
});

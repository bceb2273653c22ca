import Database from "better-sqlite3";
import { expect, it } from "vitest";
import { getDb } from "#app/db/client.server.ts";
import { mayWrite } from "#app/db/write-when-free.server.ts";
import { middleware } from "#app/root.tsx";

/*
 * A write request waits for the write lock without freezing the server's thread (root.tsx's
 * middleware): while another connection holds the lock, the request is parked, timers on this
 * thread keep firing, and the request goes on as soon as the lock is free. Reads never wait.
 */

const gate = middleware[0]!;
const call = (request: Request, next: () => Promise<Response>) =>
  gate({ request, params: {}, context: {} as never, unstable_pattern: "" } as never, next as never) as Promise<Response>;

it("only requests that may write wait: GET, HEAD and the calibration calculations go straight on", () => {
  expect(mayWrite(new Request("http://localhost/review/3", { method: "POST" }))).toBe(true);
  expect(mayWrite(new Request("http://localhost/api/v1/reviews", { method: "POST" }))).toBe(true);
  expect(mayWrite(new Request("http://localhost/explore"))).toBe(false);
  expect(mayWrite(new Request("http://localhost/explore", { method: "HEAD" }))).toBe(false);
  expect(mayWrite(new Request("http://localhost/calibrate", { method: "POST" }))).toBe(false);
  expect(mayWrite(new Request("http://localhost/calibrate/batch", { method: "POST" }))).toBe(false);
  expect(mayWrite(new Request("http://localhost/api/v1/calibrate", { method: "POST" }))).toBe(false);
  expect(mayWrite(new Request("http://localhost/calibrated", { method: "POST" }))).toBe(true);
});

it("a POST waits while another connection holds the lock, without stopping the thread, then runs", async () => {
  const other = new Database(getDb().$client.name);
  other.exec("BEGIN IMMEDIATE");
  let ran = 0;
  let ticks = 0;
  const ticker = setInterval(() => ticks++, 5);
  try {
    const answer = call(new Request("http://localhost/review/1", { method: "POST" }), async () => {
      ran++;
      return new Response("done");
    });
    await new Promise((resolve) => setTimeout(resolve, 300));
    expect(ran).toBe(0);
    expect(ticks).toBeGreaterThan(10); // the thread kept serving timers while the request waited
    // A read goes straight on meanwhile.
    const read = await call(new Request("http://localhost/explore"), async () => new Response("read"));
    expect(await read.text()).toBe("read");
    other.exec("COMMIT");
    expect(await (await answer).text()).toBe("done");
    expect(ran).toBe(1);
  } finally {
    clearInterval(ticker);
    if (other.inTransaction) other.exec("ROLLBACK");
    other.close();
  }
});

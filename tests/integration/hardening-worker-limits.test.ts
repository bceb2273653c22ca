import { afterAll, describe, expect, it, vi } from "vitest";
import * as batch from "#app/routes/resources/calibrate-batch.ts";
import { closeWorkers } from "#app/workers/pool.server.ts";
import { longestPause } from "#tests/support/write-lock.ts";
import { calibrationDates, postCalibrate } from "#tests/support/calibrate-api.ts";

/*
 * Issue 14, items 8 and 10: a calculation in a worker thread that runs past its time limit, or out
 * of the thread's memory, ends that thread only. The answer is a clear 503 in about the time of the
 * limit, and the server (this thread) keeps answering others meanwhile and afterwards. The limits
 * are small here (WORKER_TIME_LIMIT_MS, INTAKE_HEAP_MB), so the tests take seconds.
 */

vi.hoisted(() => {
  // Read once, when the app first reads its environment (after this file's imports are loaded).
  process.env.WORKER_TIME_LIMIT_MS = "150";
});

afterAll(() => closeWorkers());

const post = postCalibrate;
const dates = calibrationDates;

describe("a calculation past its thread's time limit", () => {
  it("the calibration API answers 503 saying why, and answers a small request at once meanwhile", async () => {
    // Several hundred ms of calibration in the intake thread, far past the 150 ms limit.
    const large = post({ determinations: dates(5_000, 100) });
    const small = await post({ determinations: dates(3, 40) });
    expect(small.status).toBe(200);
    const { value: res, ms } = await longestPause(() => large);
    expect(res.status).toBe(503);
    const body = (await res.json()) as { error: string };
    expect(body.error).toBe("The calibration took longer than 150 ms, so it was stopped; send fewer dates at a time.");
    expect(ms).toBeLessThan(20_000);
    // A fresh thread takes the next large request (stopped again: the limit is the same).
    expect((await post({ determinations: dates(5_000, 100) })).status).toBe(503);
  });

  it("the calibration page's slices answer 503 with the same words", async () => {
    const items = Array.from({ length: 100 }, (_, i) => ({ id: `p${i}`, c14_age: 9000 + i, c14_error: 1500 }));
    const request = new Request("http://localhost/calibrate/batch", {
      method: "POST",
      headers: { "Content-Type": "application/json", "X-Thawline-Client": "198.51.100.200" },
      body: JSON.stringify({ items }),
    });
    const res = (await batch.action({ request, params: {}, context: {} } as never)) as Response;
    expect(res.status).toBe(503);
    expect(((await res.json()) as { error: string }).error).toMatch(/took longer than 150 ms, so it was stopped/);
  });
});

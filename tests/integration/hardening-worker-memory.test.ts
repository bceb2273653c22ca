import { afterAll, describe, expect, it, vi } from "vitest";
import { closeWorkers } from "#app/workers/pool.server.ts";
import { calibrationDates, postCalibrate } from "#tests/support/calibrate-api.ts";

/*
 * Issue 14, items 8 and 10: a task that needs more memory than the intake thread's heap ends that
 * thread, not the server. The answer is a clear 503, other requests are answered meanwhile, and a
 * fresh thread takes the next task. The heap is made small here (INTAKE_HEAP_MB) so a request the
 * API accepts runs out of it.
 */

vi.hoisted(() => {
  // Read once, when the app first reads its environment (after this file's imports are loaded).
  process.env.INTAKE_HEAP_MB = "20";
});

afterAll(() => closeWorkers());

const post = postCalibrate;
const dates = calibrationDates;

describe("a calculation past its thread's memory", () => {
  it("the calibration API answers 503 saying why; the server and a fresh thread go on", async () => {
    // 1,900 densities (about 15 MB of answer, several times that while it is built) in a 20 MB heap.
    const large = post({ determinations: dates(1_900, 50), density: true });
    const small = await post({ determinations: dates(3, 40) });
    expect(small.status).toBe(200);
    const res = await large;
    expect(res.status).toBe(503);
    expect(((await res.json()) as { error: string }).error).toBe(
      "The calibration needed more memory than one request may use, so it was stopped; send fewer dates at a time.",
    );
    // The next large request gets a fresh thread (1,000 dates without densities: in a thread, within the heap).
    const next = await post({ determinations: dates(1_000, 100) });
    expect(next.status).toBe(200);
    expect(((await next.json()) as { results: unknown[] }).results).toHaveLength(1_000);
  });
});

import { afterAll, describe, expect, it } from "vitest";
import { getDb } from "#app/db/client.server.ts";
import { calibrateItems } from "#app/models/calibration/calibrate-items.server.ts";
import { MAX_REQUEST_WORK } from "#app/utils/calibrate-limits.ts";
import { CALIBRATE_WORK_BUDGET } from "#app/routes/api/v1/calibrate.ts";
import { spend } from "#app/utils/rate-limit.server.ts";
import { closeWorkers } from "#app/workers/pool.server.ts";
import { calibrationDates, postCalibrate } from "#tests/support/calibrate-api.ts";

// Case 10 of the hardening issue: the public calibration API bounds the work of one request
// (items × the calendar span each calibrates over), writes large answers as a stream, calibrates
// large requests off the request thread, and limits each address by the work it asks for.

afterAll(() => closeWorkers());

const post = postCalibrate;
const dates = calibrationDates;

describe("work of one request", () => {
  it("10,000 dates of error 2,000 (each spanning ~20,000 calendar years) are a 413 that says why, not a 10 s calibration", async () => {
    const res = await post({ determinations: dates(10_000, 2_000) });
    expect(res.status).toBe(413);
    const body = (await res.json()) as { error: string; work: number; limit: number };
    expect(body.limit).toBe(MAX_REQUEST_WORK);
    expect(body.work).toBeGreaterThan(MAX_REQUEST_WORK);
    expect(body.error).toMatch(/too much work for one call/);
    expect(body.error).toMatch(/determinations\[\d+\] spans [\d,]+ calendar years/);
    expect(body.error).toMatch(/smaller requests/);
  });

  it("1,000 dates with densities (a 200 MB answer before) are a 413; the same without densities are calibrated", async () => {
    const res = await post({ determinations: dates(1_000, 2_000), density: true });
    expect(res.status).toBe(413);
    expect(((await res.json()) as { error: string }).error).toMatch(/with densities.*or without densities/s);
    const plain = await post({ determinations: dates(100, 2_000) });
    expect(plain.status).toBe(200);
    expect(((await plain.json()) as { results: unknown[] }).results).toHaveLength(100);
  });

  it("items whose error is beyond what is taken are a 400 naming every one by index and field", async () => {
    const items: Record<string, unknown>[] = dates(10, 50);
    items[3] = { ...items[3], c14_error: 20_000 };
    items[7] = { id: "m", c14_age: 9500, c14_error: 80, curve: "marine20", delta_r: 0, delta_r_error: 9_000 };
    const res = await post({ determinations: items });
    expect(res.status).toBe(400);
    const body = (await res.json()) as { error: string; problems: { index: number; field: string; message: string }[] };
    expect(body.problems.map((p) => [p.index, p.field])).toEqual([
      [3, "c14_error"],
      [7, "delta_r_error"],
    ]);
    expect(body.error).toMatch(/^2 items cannot be taken/);
    expect(body.error).toContain("determinations[3].c14_error: 20,000 is more than the 5,000");
    expect(body.error).toContain("determinations[7].delta_r_error: 9,000");
  });
});

describe("large answers", () => {
  it("are written as a stream of pieces, byte for byte the documented JSON", async () => {
    const items = dates(600, 40);
    const res = await post({ determinations: items, density: true });
    expect(res.status).toBe(200);
    expect(res.headers.get("Content-Type")).toMatch(/application\/json/);
    const reader = res.body!.getReader();
    const chunks: Uint8Array[] = [];
    for (let r = await reader.read(); !r.done; r = await reader.read()) chunks.push(r.value);
    expect(chunks.length).toBeGreaterThan(2);
    const text = Buffer.concat(chunks).toString("utf8");
    expect(text).toBe(JSON.stringify(calibrateItems(getDb(), items, { density: true })));
  });

  it("are calibrated off the request thread: a small request sent after a large one is answered first", async () => {
    const order: string[] = [];
    const large = post({ determinations: dates(10_000, 60) }).then(async (res) => {
      const body = (await res.json()) as { results: { median_cal_bp?: number }[] };
      order.push("large");
      return { res, body };
    });
    const small = post({ determinations: dates(1, 40) }).then(async (res) => {
      await res.json();
      order.push("small");
      return res;
    });
    const [l, s] = await Promise.all([large, small]);
    expect(l.res.status).toBe(200);
    expect(s.status).toBe(200);
    expect(l.body.results).toHaveLength(10_000);
    expect(l.body.results.every((r) => typeof r.median_cal_bp === "number")).toBe(true);
    expect(order).toEqual(["small", "large"]);
  });
});

describe("per-address limit counts work", () => {
  it("an address that used its work budget gets 429 with Retry-After, although it sent few requests", async () => {
    const address = "203.0.113.9";
    // Earlier requests from this address used most of its budget (three of the largest requests).
    spend(
      `api.calibrate.work:${address}`,
      3.9 * MAX_REQUEST_WORK,
      CALIBRATE_WORK_BUDGET.capacity,
      CALIBRATE_WORK_BUDGET.refillMs,
    );
    // A single date still fits …
    expect((await post({ determinations: dates(1, 40) }, address)).status).toBe(200);
    // … a large request does not.
    const refused = await post({ determinations: dates(5_000, 100) }, address);
    expect(refused.status).toBe(429);
    const retry = Number(refused.headers.get("Retry-After"));
    expect(retry).toBeGreaterThan(0);
    expect(retry).toBeLessThanOrEqual(60);
    expect(((await refused.json()) as { error: string }).error).toMatch(
      /Too much calibration from this address.*try again in \d+ s/,
    );
    // Another address is unaffected.
    const other = await post({ determinations: dates(5_000, 100) }, "203.0.113.10");
    expect(other.status).toBe(200);
    expect(((await other.json()) as { results: unknown[] }).results).toHaveLength(5_000);
  });

  it("the budget refills over a minute and a refused request is not counted", () => {
    const key = "test.work:a";
    const t0 = 5_000_000;
    const cap = 1_000;
    expect(spend(key, 800, cap, 60_000, { now: t0 })).toEqual({ allowed: true, retryAfterS: 0, used: 800 });
    // 300 more do not fit: 100 must drain first, 6 s at 1,000 a minute.
    expect(spend(key, 300, cap, 60_000, { now: t0 })).toEqual({ allowed: false, retryAfterS: 6, used: 800 });
    expect(spend(key, 200, cap, 60_000, { now: t0 })).toEqual({ allowed: true, retryAfterS: 0, used: 1_000 });
    // 30 s later half has drained.
    expect(spend(key, 500, cap, 60_000, { now: t0 + 30_000 })).toEqual({ allowed: true, retryAfterS: 0, used: 1_000 });
    expect(spend(key, 1, cap, 60_000, { now: t0 + 90_000 + 1 }).allowed).toBe(true);
  });
});

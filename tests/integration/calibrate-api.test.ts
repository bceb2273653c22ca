import { describe, expect, test } from "vitest";
import { action, CALIBRATE_RATE_LIMIT, loader } from "#app/routes/api/v1/calibrate.ts";

// Each test uses its own client address so the per-address rate limit never couples tests.
let addressCounter = 0;
function post(body: unknown, options: { raw?: string; address?: string } = {}) {
  const request = new Request("http://localhost/api/v1/calibrate", {
    method: "POST",
    headers: { "Content-Type": "application/json", "X-Thawline-Client": options.address ?? `10.0.0.${++addressCounter}` },
    body: options.raw ?? JSON.stringify(body),
  });
  return action({ request, params: {}, context: {} } as never) as Promise<Response>;
}

async function bodyOf(res: Response) {
  expect(res.headers.get("Content-Type")).toMatch(/application\/json/);
  return (await res.json()) as any;
}

const A1 = { id: "a1", c14_age: 10250, c14_error: 45, curve: "intcal20" };
const M1 = { id: "m1", c14_age: 9500, c14_error: 70, curve: "marine20", delta_r: 50, delta_r_error: 40 };

function expectRangesWellFormed(ranges: { from: number; to: number; p: number }[]) {
  expect(ranges.length).toBeGreaterThan(0);
  for (const r of ranges) {
    expect(Object.keys(r).sort()).toEqual(["from", "p", "to"]);
    expect(r.from).toBeGreaterThanOrEqual(r.to);
    expect(r.p).toBeGreaterThan(0);
    expect(r.p).toBeLessThanOrEqual(1);
    expect(Math.round(r.p * 1000)).toBeCloseTo(r.p * 1000, 6); // at most 3 decimals
  }
  // ordered from oldest: each range lies wholly before (older than) the next
  for (let i = 1; i < ranges.length; i++) expect(ranges[i - 1]!.to).toBeGreaterThan(ranges[i]!.from);
}

describe("POST /api/v1/calibrate", () => {
  test("calibrates good items with the documented shape", async () => {
    const res = await post({ determinations: [A1, M1] });
    expect(res.status).toBe(200);
    const body = await bodyOf(res);
    expect(Object.keys(body).sort()).toEqual(["curves", "results"]);
    expect(Object.keys(body.curves).sort()).toEqual(["intcal20", "marine20"]);
    expect(body.curves.intcal20.version).toBe("2020");
    expect(body.curves.intcal20.citation).toMatch(/IntCal20/);
    expect(body.curves.marine20.citation).toMatch(/Marine20/);
    expect(body.results).toHaveLength(2);
    const [a1, m1] = body.results;
    expect(Object.keys(a1).sort()).toEqual(["hpd68", "hpd95", "id", "median_cal_bp"]);
    expect(a1.id).toBe("a1");
    expect(Number.isInteger(a1.median_cal_bp)).toBe(true);
    // The brief's worked example: 10,250 ± 45 on IntCal20 has its median near 11,940 cal BP.
    expect(a1.median_cal_bp).toBeGreaterThan(11800);
    expect(a1.median_cal_bp).toBeLessThan(12100);
    expectRangesWellFormed(a1.hpd68);
    expectRangesWellFormed(a1.hpd95);
    const sum95 = a1.hpd95.reduce((s: number, r: { p: number }) => s + r.p, 0);
    expect(sum95).toBeGreaterThan(0.95);
    expect(sum95).toBeLessThan(0.96);
    // 68.3 % ranges lie inside the 95.4 % ranges
    for (const r of a1.hpd68) {
      expect(a1.hpd95.some((o: { from: number; to: number }) => o.from >= r.from && o.to <= r.to)).toBe(true);
    }
    expect(m1.id).toBe("m1");
    expectRangesWellFormed(m1.hpd95);
    expect(m1.median_cal_bp).toBeGreaterThan(9000);
    expect(m1.median_cal_bp).toBeLessThan(11000);
  });

  test("a marine ΔR moves the calendar age: a larger ΔR gives a younger age", async () => {
    const res = await post({
      determinations: [
        { id: "low", c14_age: 9500, c14_error: 70, curve: "marine20", delta_r: 0, delta_r_error: 0 },
        { id: "high", c14_age: 9500, c14_error: 70, curve: "marine20", delta_r: 300, delta_r_error: 0 },
      ],
    });
    const body = await bodyOf(res);
    expect(body.results[1].median_cal_bp).toBeLessThan(body.results[0].median_cal_bp - 200);
  });

  test("bad items get an error in their place while the others are calibrated", async () => {
    const res = await post({
      determinations: [
        { id: "neg", c14_age: 10250, c14_error: -45, curve: "intcal20" },
        A1,
        { id: "nocurve", c14_age: 10250, c14_error: 45, curve: "no-such-curve" },
        { id: "old", c14_age: 80000, c14_error: 500, curve: "intcal20" },
        { id: "text", c14_age: "ten thousand", c14_error: 45 },
        { id: "missing", c14_error: 45 },
        { id: "dr-on-atmos", c14_age: 10250, c14_error: 45, curve: "intcal20", delta_r: 50 },
        42,
      ],
    });
    expect(res.status).toBe(200);
    const body = await bodyOf(res);
    const r = body.results;
    expect(r).toHaveLength(8);
    expect(r[0]).toEqual({ id: "neg", error: expect.stringMatching(/c14_error must be positive/) });
    expect(r[1].id).toBe("a1");
    expect(r[1].median_cal_bp).toBeGreaterThan(11800);
    expect(r[2]).toEqual({ id: "nocurve", error: expect.stringMatching(/Unknown curve "no-such-curve"/) });
    expect(r[3]).toEqual({ id: "old", error: expect.stringMatching(/beyond the curve/) });
    expect(r[4]).toEqual({ id: "text", error: expect.stringMatching(/c14_age must be a number/) });
    expect(r[5]).toEqual({ id: "missing", error: expect.stringMatching(/c14_age is required/) });
    expect(r[6]).toEqual({ id: "dr-on-atmos", error: expect.stringMatching(/marine curves only/) });
    expect(r[7]).toEqual({ id: "8", error: expect.stringMatching(/must be an object/) });
    // only curves that were used
    expect(Object.keys(body.curves)).toEqual(["intcal20"]);
  });

  test("no curve is listed when nothing calibrated", async () => {
    const body = await bodyOf(await post({ determinations: [{ id: "x", c14_age: 1, c14_error: 0, curve: "marine20" }] }));
    expect(body.curves).toEqual({});
    expect(body.results[0].error).toBeTruthy();
  });

  test("density flag adds each result's density on a 1-year grid", async () => {
    const res = await post({ determinations: [A1], density: true });
    const body = await bodyOf(res);
    const d = body.results[0].density;
    expect(Object.keys(d).sort()).toEqual(["start_cal_bp", "step", "values"]);
    expect(d.step).toBe(1);
    const total = d.values.reduce((s: number, v: number) => s + v, 0);
    expect(total).toBeCloseTo(1, 3);
    const oldest = d.start_cal_bp + d.values.length - 1;
    for (const r of body.results[0].hpd95) {
      expect(r.to).toBeGreaterThanOrEqual(d.start_cal_bp);
      expect(r.from).toBeLessThanOrEqual(oldest);
    }
    const without = await bodyOf(await post({ determinations: [A1] }));
    expect(without.results[0].density).toBeUndefined();
  });

  test("malformed JSON is a 400 with a clear message", async () => {
    const res = await post(null, { raw: '{"determinations": [' });
    expect(res.status).toBe(400);
    expect(await bodyOf(res)).toEqual({ error: "The request body is not valid JSON." });
  });

  test("a missing determinations array is a 400", async () => {
    for (const body of [{}, { determinations: "a1" }, [A1], "x"]) {
      const res = await post(body);
      expect(res.status).toBe(400);
      expect((await bodyOf(res)).error).toMatch(/determinations/);
    }
  });

  test("more than 10,000 items is a 400", async () => {
    const many = Array.from({ length: 10_001 }, (_, i) => ({ id: String(i), c14_age: 5000, c14_error: 30 }));
    const res = await post({ determinations: many });
    expect(res.status).toBe(400);
    expect((await bodyOf(res)).error).toMatch(/Too many determinations: 10001; at most 10,000/);
  });

  test("10,000 items are accepted", async () => {
    const many = Array.from({ length: 10_000 }, (_, i) => ({ id: String(i), c14_age: 3000 + (i % 9000), c14_error: 30 }));
    const res = await post({ determinations: many });
    expect(res.status).toBe(200);
    const body = await bodyOf(res);
    expect(body.results).toHaveLength(10_000);
    expect(body.results.every((r: { median_cal_bp?: number }) => typeof r.median_cal_bp === "number")).toBe(true);
  });

  test("rate limit answers 429 with Retry-After per client address", async () => {
    const address = "192.0.2.77";
    for (let i = 0; i < CALIBRATE_RATE_LIMIT.limit; i++) {
      const res = await post({ determinations: [] }, { address });
      expect(res.status).toBe(200);
    }
    const refused = await post({ determinations: [A1] }, { address });
    expect(refused.status).toBe(429);
    expect(Number(refused.headers.get("Retry-After"))).toBeGreaterThan(0);
    expect((await bodyOf(refused)).error).toMatch(/Too many requests/);
    // another address is unaffected
    expect((await post({ determinations: [A1] }, { address: "192.0.2.78" })).status).toBe(200);
  });

  test("GET is a 405", async () => {
    const res = (await loader({
      request: new Request("http://localhost/api/v1/calibrate"),
      params: {},
      context: {},
    } as never)) as Response;
    expect(res.status).toBe(405);
    expect(res.headers.get("Allow")).toBe("POST");
    expect((await bodyOf(res)).error).toMatch(/POST/);
  });
});

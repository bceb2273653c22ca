import { describe, expect, it } from "vitest";
import fc from "fast-check";
import {
  calibrate,
  CalibrationError,
  normalDensity,
  summariseDensity,
  type CalendarDensity,
  type Range,
} from "#app/science/calibration.ts";
import { prepareCurve, type Curve, type PreparedCurve } from "#app/science/curve.ts";
import { loadCurve } from "./curve-files.ts";

function synthetic(n: number, c: (theta: number) => number, s: (theta: number) => number = () => 0): Curve {
  const calBp = new Float64Array(n);
  const c14 = new Float64Array(n);
  const sigma = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    calBp[i] = i;
    c14[i] = c(i);
    sigma[i] = s(i);
  }
  return { name: "synthetic", calBp, c14, sigma };
}

const straight = prepareCurve(synthetic(30001, (t) => t));
const intcal = prepareCurve(loadCurve("intcal20"));
const marine = prepareCurve(loadCurve("marine20"));

function sum(a: ArrayLike<number>): number {
  let s = 0;
  for (let i = 0; i < a.length; i++) s += a[i];
  return s;
}

function inside(inner: Range[], outer: Range[]): boolean {
  return inner.every((r) => outer.some((o) => r.from <= o.from && r.to >= o.to));
}

/** The A4 formula evaluated over the whole grid with no skipping, as an independent reference. */
function bruteForce(p: PreparedCurve, mu: number, extraVar: number): Float64Array {
  const out = new Float64Array(p.length);
  let t = 0;
  for (let g = 0; g < p.length; g++) {
    const v = extraVar + p.s2[g];
    out[g] = Math.exp(-((mu - p.c[g]) ** 2) / (2 * v)) / Math.sqrt(v);
    t += out[g];
  }
  for (let g = 0; g < p.length; g++) out[g] /= t;
  return out;
}

/**
 * The HPD definition done the slow way: sort all grid values from highest down and accumulate
 * until the level is reached; the smallest set's mass is where the accumulation stops.
 */
function referenceHpdMass(values: ArrayLike<number>, level: number): number {
  const sorted = Array.from(values).sort((a, b) => b - a);
  const total = sum(sorted);
  let cum = 0;
  for (const v of sorted) {
    cum += v;
    if (cum >= level * total) break;
  }
  return cum / total;
}

describe("calibration on synthetic curves (A4 derived checks)", () => {
  it("a straight curve gives μ ± σ and μ ± 2σ within one grid step", () => {
    // 0.683 and 0.954 are not exactly ±1σ and ±2σ of a normal (two-sided z = 1.00064 and 1.99539,
    // from the normal quantile), so the allowance grows by that tiny difference for wide errors.
    const z68 = 1.00064;
    const z95 = 1.99539;
    fc.assert(
      fc.property(
        fc.double({ min: 3000, max: 25000, noNaN: true }),
        fc.double({ min: 5, max: 100, noNaN: true }),
        (mu, sigma) => {
          const r = calibrate(straight, { age: mu, error: sigma });
          const tol68 = 1 + (z68 - 1) * sigma + 1e-9;
          const tol95 = 1 + (2 - z95) * sigma + 1e-9;
          // Bronk Ramsey 2009 / CHECK_VALUES A4 [derived]
          expect(r.hpd68).toHaveLength(1);
          expect(r.hpd95).toHaveLength(1);
          expect(Math.abs(r.hpd68[0].from - (mu + sigma))).toBeLessThanOrEqual(tol68);
          expect(Math.abs(r.hpd68[0].to - (mu - sigma))).toBeLessThanOrEqual(tol68);
          expect(Math.abs(r.hpd95[0].from - (mu + 2 * sigma))).toBeLessThanOrEqual(tol95);
          expect(Math.abs(r.hpd95[0].to - (mu - 2 * sigma))).toBeLessThanOrEqual(tol95);
          expect(Math.abs(r.medianCalBp - mu)).toBeLessThanOrEqual(0.5);
        },
      ),
      { numRuns: 200 },
    );
  });

  it("on a grid-centred straight-curve date the 68.3 % bounds are within half a grid step", () => {
    // CHECK_VALUES A4 [derived]: "within half a grid step"
    for (const sigma of [10, 25, 40, 50, 73, 100]) {
      const r = calibrate(straight, { age: 12000, error: sigma });
      expect(Math.abs(r.hpd68[0].from - (12000 + sigma))).toBeLessThanOrEqual(0.5);
      expect(Math.abs(r.hpd68[0].to - (12000 - sigma))).toBeLessThanOrEqual(0.5);
      expect(r.medianCalBp).toBeCloseTo(12000, 6);
    }
  });

  it("shifting the age on a straight curve shifts the result by the same amount", () => {
    fc.assert(
      fc.property(
        // Kept more than 6σ from the synthetic curve's ends so truncation cannot move the result.
        fc.double({ min: 5000, max: 20000, noNaN: true }),
        fc.double({ min: 5, max: 300, noNaN: true }),
        fc.integer({ min: -2000, max: 2000 }),
        (mu, sigma, d) => {
          const a = calibrate(straight, { age: mu, error: sigma });
          const b = calibrate(straight, { age: mu + d, error: sigma });
          expect(Math.abs(b.medianCalBp - a.medianCalBp - d)).toBeLessThan(0.01);
          // Bounds may move by one year where two grid points tie at the threshold.
          expect(Math.abs(b.hpd95[0].from - a.hpd95[0].from - d)).toBeLessThanOrEqual(1);
          expect(Math.abs(b.hpd68[0].to - a.hpd68[0].to - d)).toBeLessThanOrEqual(1);
        },
      ),
      { numRuns: 100 },
    );
  });

  it("a flat plateau gives a flat posterior over it", () => {
    // CHECK_VALUES A4 [derived]
    const plateau = prepareCurve(synthetic(6001, (t) => (t < 2000 ? t - 1000 : t <= 3000 ? 1000 : t - 2000)));
    const r = calibrate(plateau, { age: 1000, error: 10 });
    const v = r.density.values;
    const at = (calBp: number) => v[calBp - r.density.startCalBp];
    const ref = at(2500);
    for (let t = 2000; t <= 3000; t++) expect(at(t) / ref).toBeCloseTo(1, 6);
    expect(at(1970)).toBeLessThan(ref * 0.02);
    expect(r.hpd95).toHaveLength(1);
    expect(r.medianCalBp).toBeCloseTo(2500, 0);
  });

  it("a curve with two separated matches gives two disjoint ranges", () => {
    // CHECK_VALUES A4 [derived]
    const folded = prepareCurve(synthetic(10001, (t) => (t <= 5000 ? t : 10000 - t)));
    const r = calibrate(folded, { age: 3000, error: 30 });
    expect(r.hpd68).toHaveLength(2);
    expect(r.hpd95).toHaveLength(2);
    expect(r.hpd95[0].from).toBeGreaterThan(r.hpd95[1].from);
    expect(r.hpd95[0].to).toBeGreaterThan(r.hpd95[1].from);
    expect(r.hpd95[0].p).toBeCloseTo(0.477, 2);
    expect(r.hpd95[1].p).toBeCloseTo(0.477, 2);
    expect(Math.abs(r.hpd95[0].from - 7060)).toBeLessThanOrEqual(1 + 1e-6);
    expect(Math.abs(r.hpd95[1].to - 2940)).toBeLessThanOrEqual(1 + 1e-6);
  });
});

describe("calibration on the published curves", () => {
  // Marine ages are kept above Marine20's youngest 14C age plus ΔR so every case is calibratable.
  const arb = fc
    .record({
      curve: fc.constantFrom("intcal", "marine"),
      age: fc.double({ min: 300, max: 45000, noNaN: true }),
      error: fc.double({ min: 10, max: 600, noNaN: true }),
      deltaR: fc.double({ min: -200, max: 400, noNaN: true }),
      deltaRError: fc.double({ min: 0, max: 150, noNaN: true }),
    })
    .map((x) => (x.curve === "marine" ? { ...x, age: x.age + 400 + x.deltaR } : x));

  it("densities sum to 1 and 68.3 % ranges lie inside 95.4 % ranges", () => {
    // CHECK_VALUES A4 [derived]
    fc.assert(
      fc.property(arb, (x) => {
        const r =
          x.curve === "intcal"
            ? calibrate(intcal, { age: x.age, error: x.error })
            : calibrate(marine, { age: x.age, error: x.error, deltaR: x.deltaR, deltaRError: x.deltaRError });
        expect(sum(r.density.values)).toBeCloseTo(1, 5);
        expect(inside(r.hpd68, r.hpd95)).toBe(true);
        // The stored density alone reproduces the reported summary exactly.
        const again = summariseDensity(r.density);
        expect(again.medianCalBp).toBe(r.medianCalBp);
        // calibrate adds only the curve-limit flag to the ranges.
        const bare = (list: Range[]) => list.map(({ atCurveLimit: _, ...x }) => x);
        expect(again.hpd68).toEqual(bare(r.hpd68));
        expect(again.hpd95).toEqual(bare(r.hpd95));
        const p68 = sum(r.hpd68.map((q) => q.p));
        const p95 = sum(r.hpd95.map((q) => q.p));
        expect(p68).toBeGreaterThanOrEqual(0.683 - 1e-6);
        expect(p95).toBeGreaterThanOrEqual(0.954 - 1e-6);
        expect(p68).toBeCloseTo(referenceHpdMass(r.density.values, 0.683), 6);
        expect(p95).toBeCloseTo(referenceHpdMass(r.density.values, 0.954), 6);
        for (const list of [r.hpd68, r.hpd95]) {
          for (let i = 0; i < list.length; i++) {
            expect(list[i].from).toBeGreaterThanOrEqual(list[i].to);
            if (i > 0) expect(list[i].from).toBeLessThan(list[i - 1].to - 1);
          }
        }
        expect(r.medianCalBp).toBeGreaterThanOrEqual(r.hpd95[r.hpd95.length - 1].to - 1);
        expect(r.medianCalBp).toBeLessThanOrEqual(r.hpd95[0].from + 1);
      }),
      { numRuns: 150 },
    );
  });

  it("skipping blocks changes nothing measurable against the full-grid A4 formula", () => {
    fc.assert(
      fc.property(arb, (x) => {
        const p = x.curve === "intcal" ? intcal : marine;
        const dr = x.curve === "intcal" ? 0 : x.deltaR;
        const drs = x.curve === "intcal" ? 0 : x.deltaRError;
        const r = calibrate(p, { age: x.age, error: x.error, deltaR: dr, deltaRError: drs });
        const ref = bruteForce(p, x.age - dr, x.error ** 2 + drs ** 2);
        let maxDiff = 0;
        for (let g = 0; g < p.length; g++) {
          const i = p.startCalBp + g - r.density.startCalBp;
          const mine = i >= 0 && i < r.density.values.length ? r.density.values[i] : 0;
          maxDiff = Math.max(maxDiff, Math.abs(mine - ref[g]));
        }
        let refMax = 0;
        for (const v of ref) refMax = Math.max(refMax, v);
        expect(maxDiff / refMax).toBeLessThan(1e-5);
      }),
      { numRuns: 40 },
    );
  });

  it("the result does not depend on the index's block size", () => {
    const curve = loadCurve("intcal20");
    const fine = prepareCurve(curve, { blockSize: 8 });
    const coarse = prepareCurve(curve, { blockSize: 512 });
    for (const [age, error] of [
      [1250, 20],
      [10250, 45],
      [30000, 300],
    ]) {
      const a = calibrate(fine, { age, error });
      const b = calibrate(coarse, { age, error });
      expect(a.medianCalBp).toBeCloseTo(b.medianCalBp, 6);
      expect(a.hpd95.map((r) => [r.from, r.to])).toEqual(b.hpd95.map((r) => [r.from, r.to]));
    }
  });

  it("ΔR is the same as calibrating against a shifted curve with errors in quadrature (A5)", () => {
    // Heaton et al. 2020 / CHECK_VALUES A5 [common practice]: c + ΔR, √(s² + σ_ΔR²)
    const base = loadCurve("marine20");
    const shifted: Curve = {
      name: "marine20+dR",
      calBp: base.calBp,
      c14: base.c14.map((v) => v + 81),
      sigma: base.sigma.map((s) => Math.sqrt(s * s + 18 * 18)),
    };
    const a = calibrate(marine, { age: 9500, error: 40, deltaR: 81, deltaRError: 18 });
    const b = calibrate(prepareCurve(shifted), { age: 9500, error: 40 });
    expect(a.medianCalBp).toBeCloseTo(b.medianCalBp, 3);
    expect(a.hpd95).toEqual(b.hpd95.map((r) => ({ ...r, p: expect.closeTo(r.p, 5) })));
    expect(a.density.startCalBp).toBe(b.density.startCalBp);
  });

  it("10250 ± 45 on IntCal20 falls in the right millennium", () => {
    // sanity, not a published value
    const r = calibrate(intcal, { age: 10250, error: 45 });
    expect(r.medianCalBp).toBeGreaterThan(11900);
    expect(r.medianCalBp).toBeLessThan(12100);
    expect(r.curveName).toBe("intcal20");
    expect(r.atCurveLimit).toBe(false);
  });

  it("refuses ages beyond the curve and names its limits", () => {
    const err = (() => {
      try {
        calibrate(intcal, { age: 60000, error: 500 });
      } catch (e) {
        return e;
      }
    })();
    expect(err).toBeInstanceOf(CalibrationError);
    expect((err as CalibrationError).code).toBe("beyond-curve");
    expect((err as Error).message).toMatch(
      /cannot overlap it: even its age − 2σ \(58,487\) is older than the curve reaches; intcal20 covers 95–50,193 ¹⁴C yr BP \(0–55,000 cal BP\)/,
    );
    expect(() => calibrate(intcal, { age: 20, error: 20 })).toThrow(/beyond the curve/);
    expect(() => calibrate(marine, { age: 54000, error: 500, deltaR: 100 })).toThrow(/with ΔR 100/);
    expect(() => calibrate(intcal, { age: 5000, error: 0 })).toThrow(CalibrationError);
    expect(() => calibrate(intcal, { age: Number.NaN, error: 10 })).toThrow(/must be a number/);
  });

  it("flags a density that reaches the end of the curve", () => {
    const r = calibrate(intcal, { age: 49800, error: 1500 });
    expect(r.atCurveLimit).toBe(true);
    expect(r.density.startCalBp + r.density.values.length - 1).toBe(55000);
  });

  it("trims negligible tails from the stored density", () => {
    const r = calibrate(intcal, { age: 5000, error: 30 });
    const v = r.density.values;
    let max = 0;
    for (const x of v) max = Math.max(max, x);
    expect(v[0]).toBeGreaterThanOrEqual(max * 1e-6 * 0.999);
    expect(v[v.length - 1]).toBeGreaterThanOrEqual(max * 1e-6 * 0.999);
    expect(v.length).toBeLessThan(1500);
  });
});

describe("normalDensity and summariseDensity", () => {
  it("a normal age has median ≈ mean and ranges ≈ mean ± σ, ± 2σ", () => {
    fc.assert(
      fc.property(fc.double({ min: -50, max: 120000, noNaN: true }), fc.double({ min: 5, max: 100, noNaN: true }), (m, s) => {
        const d = normalDensity(m, s);
        const r = summariseDensity(d);
        expect(sum(d.values)).toBeCloseTo(1, 5);
        expect(Math.abs(r.medianCalBp - m)).toBeLessThanOrEqual(0.5);
        expect(Math.abs(r.meanCalBp - m)).toBeLessThanOrEqual(0.01);
        // Same allowance as on the straight curve: one grid step plus the 0.683/0.954 vs ±1σ/±2σ gap.
        const tol68 = 1 + 0.00064 * s + 1e-9;
        const tol95 = 1 + (2 - 1.99539) * s + 1e-9;
        expect(Math.abs(r.hpd68[0].from - (m + s))).toBeLessThanOrEqual(tol68);
        expect(Math.abs(r.hpd68[0].to - (m - s))).toBeLessThanOrEqual(tol68);
        expect(Math.abs(r.hpd95[0].from - (m + 2 * s))).toBeLessThanOrEqual(tol95);
        expect(Math.abs(r.hpd95[0].to - (m - 2 * s))).toBeLessThanOrEqual(tol95);
      }),
    );
  });

  it("keeps a very narrow age on its nearest year", () => {
    const d = normalDensity(1000.2, 0.01);
    expect(d.values.length).toBe(1);
    expect(d.startCalBp).toBe(1000);
    expect(summariseDensity(d).hpd95).toEqual([{ from: 1000, to: 1000, p: expect.closeTo(1, 6) }]);
  });

  it("summarises a hand-made density exactly", () => {
    // 3 years at p 0.1, 0.5, 0.4 from 100 cal BP: sorted 0.5, 0.4 reach 0.9 ≥ 0.683;
    // all three are needed for 0.954. Median: 0.5 is reached inside year 101.
    const d: CalendarDensity = { startCalBp: 100, values: Float32Array.from([0.1, 0.5, 0.4]) };
    const r = summariseDensity(d);
    expect(r.hpd68).toEqual([{ from: 102, to: 101, p: expect.closeTo(0.9, 6) }]);
    expect(r.hpd95).toEqual([{ from: 102, to: 100, p: expect.closeTo(1, 6) }]);
    expect(r.medianCalBp).toBeCloseTo(101 - 0.5 + 0.4 / 0.5, 6);
    // A gap of zeros splits ranges, oldest first.
    const two = summariseDensity({ startCalBp: 0, values: Float32Array.from([0.3, 0, 0, 0.7]) });
    expect(two.hpd95.map((q) => [q.from, q.to])).toEqual([
      [3, 3],
      [0, 0],
    ]);
    expect(two.hpd68.map((q) => [q.from, q.to])).toEqual([[3, 3]]);
  });

  it("rejects invalid normal parameters", () => {
    expect(() => normalDensity(100, 0)).toThrow();
    expect(() => normalDensity(Number.NaN, 10)).toThrow();
  });
});

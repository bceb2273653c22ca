import { describe, expect, it } from "vitest";
import type { CalendarDensity } from "#app/science/density.ts";
import {
  densityMoments,
  directScore,
  limitingScore,
  scoreConstraint,
  OUTSIDE_SPAN_FREE,
} from "#app/science/scoring/constraint-score.ts";
import { deglaciation, iceFreeAt, nearestIceFree, siteHistory } from "#app/science/scoring/ice-history.ts";
import { gradeWeight, logLikelihoodTerm, runTotals } from "#app/science/scoring/likelihood.ts";
import { cellsWithin, iceFreeShare } from "#app/science/scoring/grid.ts";

// Independent normal CDF: Abramowitz & Stegun 26.2.17 (|error| < 7.5e-8) [published].
function phi(z: number): number {
  const t = 1 / (1 + 0.2316419 * Math.abs(z));
  const poly = t * (0.31938153 + t * (-0.356563782 + t * (1.781477937 + t * (-1.821255978 + t * 1.330274429))));
  const tail = (Math.exp((-z * z) / 2) / Math.sqrt(2 * Math.PI)) * poly;
  return z >= 0 ? 1 - tail : tail;
}

/** A normal calendar density N(μ, σ) on the 1-year grid, ±6σ. */
function normalDensity(mu: number, sigma: number): CalendarDensity {
  const start = Math.floor(mu - 6 * sigma);
  const n = Math.ceil(12 * sigma) + 1;
  const values = new Float32Array(n);
  let total = 0;
  for (let i = 0; i < n; i++) {
    values[i] = Math.exp(-(((start + i - mu) / sigma) ** 2) / 2);
    total += values[i];
  }
  for (let i = 0; i < n; i++) values[i] /= total;
  return { startCalBp: start, values };
}

/** A run with slices every `step` years from `oldest` to `youngest`, deglaciating at T (a step). */
function stepRun(oldest: number, youngest: number, step: number, t: number) {
  const ages: number[] = [];
  const free: number[] = [];
  for (let a = oldest; a >= youngest; a -= step) {
    ages.push(a);
    free.push(a <= t ? 1 : 0);
  }
  return siteHistory(ages, free);
}

describe("the ice-free history of a site", () => {
  it("interpolates linearly between slices and is undefined outside the span", () => {
    const h = siteHistory([10000, 9000, 8000], [0, 0.5, 1]);
    expect(iceFreeAt(h, 9500)).toBeCloseTo(0.25, 12); // hand: halfway between 0 and 0.5
    expect(iceFreeAt(h, 8250)).toBeCloseTo(0.875, 12);
    expect(iceFreeAt(h, 10001)).toBeNaN();
    expect(iceFreeAt(h, 7999)).toBeNaN();
  });

  it("sorts slices given young first", () => {
    const h = siteHistory([8000, 10000], [1, 0]);
    expect(Array.from(h.ages)).toEqual([10000, 8000]);
    expect(iceFreeAt(h, 9000)).toBeCloseTo(0.5, 12);
  });

  it("finds the last change from ice to ice-free, after an earlier ice-free spell", () => {
    // free at 20 ka, ice arrives by 16 ka, leaves between 12 and 11 ka
    const h = siteHistory([20000, 16000, 12000, 11000, 10000], [1, 0, 0, 1, 1]);
    const d = deglaciation(h);
    expect(d.state).toBe("in-span");
    expect(d.calBp).toBeCloseTo(11500, 9); // hand: F crosses 0.5 halfway between 12 and 11 ka
  });

  it("says when a site is never under ice or never free of it", () => {
    expect(deglaciation(siteHistory([2, 1], [1, 1]))).toEqual({ calBp: 2, state: "ice-free-throughout" });
    expect(deglaciation(siteHistory([2, 1], [0, 0]))).toEqual({ calBp: 1, state: "ice-throughout" });
  });

  it("finds the nearest ice-free time on either side", () => {
    const h = siteHistory([20000, 16000, 12000, 11000], [1, 0, 0, 1]);
    expect(nearestIceFree(h, 13000)).toBeCloseTo(11500, 9); // hand: 1500 years to the younger crossing
    expect(nearestIceFree(h, 17000)).toBeCloseTo(18000, 9); // hand: advance crossing at 18 ka
    expect(nearestIceFree(h, 11200)).toBe(11200);
  });
});

describe("limiting dates: Σ p(t) · F(s, t)", () => {
  it("gives Φ((T − μ)/σ) for a run deglaciating everywhere at T (CHECK_VALUES D, derived)", () => {
    const d = normalDensity(10000, 100);
    for (const t of [9800, 9950, 10000, 10100, 10250]) {
      // 1-year slices: the step's interpolation adds at most half a year of smearing
      const h = stepRun(12000, 8000, 1, t);
      expect(limitingScore(d, h)).toBeCloseTo(phi((t - 10000) / 100), 2);
    }
  });

  it("stays close to Φ with 100-year slices (interpolation smears the step over one slice)", () => {
    const d = normalDensity(10000, 200);
    const h = stepRun(14000, 6000, 100, 10100);
    // F ramps from 0 at 10200 to 1 at 10100: the equivalent sharp step lies at 10150
    expect(limitingScore(d, h)).toBeCloseTo(phi((10150 - 10000) / 200), 2);
  });

  it("scores the outside-span mass as uninformative (F = 1/2)", () => {
    const d = normalDensity(10000, 100);
    const h = stepRun(10000, 6000, 100, 10000); // free throughout the span, which ends at μ
    // hand: half the mass inside with F = 1, half outside with F = 1/2 → 0.75
    expect(limitingScore(d, h)).toBeCloseTo(0.5 + 0.5 * OUTSIDE_SPAN_FREE, 2);
  });
});

describe("direct dates: the highest-density p-value at D(s)", () => {
  it("is 2Φ(−|D − μ|/σ) for a normal density on 1-year slices", () => {
    const d = normalDensity(12000, 150);
    for (const t of [12000, 11850, 12300]) {
      expect(directScore(d, t, 1)).toBeCloseTo(2 * phi(-Math.abs(t - 12000) / 150), 2);
    }
  });

  it("is 0 far outside the density", () => {
    expect(directScore(normalDensity(12000, 150), 9000, 1)).toBe(0);
  });
});

describe("implausibility (one-sided, in standard deviations)", () => {
  it("is zero for a minimum-limiting date when the run deglaciates before it", () => {
    const r = scoreConstraint("minimum", normalDensity(10000, 100), stepRun(14000, 6000, 1, 10500), { timeStepYears: 1 });
    expect(r.implausibility).toBe(0);
    expect(r.modelDeglaciationCalBp).toBeCloseTo(10500.5, 9); // hand: crossing between the 10501 and 10500 slices
  });

  it("counts how late the run frees the site for a minimum-limiting date", () => {
    const r = scoreConstraint("minimum", normalDensity(10000, 100), stepRun(14000, 6000, 1, 9700), { timeStepYears: 1 });
    // hand: the run is free from 9700.5 (the crossing between slices), 299.5 years after μ;
    // sd = √(100² + 1/12)
    expect(r.implausibility).toBeCloseTo(299.5 / Math.sqrt(100 ** 2 + 1 / 12), 2);
  });

  it("is two-sided for direct dates and includes the time step's variance", () => {
    const r = scoreConstraint("direct", normalDensity(10000, 100), stepRun(14000, 6000, 1, 10300), {
      timeStepYears: 1,
      discrepancyYears: 50,
    });
    expect(r.implausibility).toBeCloseTo(300.5 / Math.sqrt(100 ** 2 + 50 ** 2 + 1 / 12), 2);
  });

  it("treats a date outside the run's span as neutral", () => {
    const r = scoreConstraint("maximum", normalDensity(30000, 200), stepRun(14000, 6000, 100, 10000), { timeStepYears: 100 });
    expect(r.score).toBe(OUTSIDE_SPAN_FREE);
    expect(r.implausibility).toBe(0);
  });

  it("cannot penalise early deglaciation with a minimum-limiting date", () => {
    const early = scoreConstraint("minimum", normalDensity(10000, 100), stepRun(14000, 6000, 10, 13000), { timeStepYears: 10 });
    expect(early.score).toBeCloseTo(1, 6);
    expect(early.implausibility).toBe(0);
  });

  it("penalises an early advance with a maximum-limiting date when the run covers the time before it", () => {
    // date says ice-free at 16 ka; the run's ice arrives at 17 ka
    const h = siteHistory([20000, 17001, 16999, 12000, 11000], [1, 1, 0, 0, 1]);
    const r = scoreConstraint("maximum", normalDensity(16000, 200), h, { timeStepYears: 1 });
    expect(r.score).toBeLessThan(1e-4);
    expect(r.implausibility).toBeCloseTo(1000 / Math.sqrt(200 ** 2 + 1 / 12), 1);
  });
});

describe("the run's total", () => {
  it("sums w · log(ε + (1 − ε) · score) with grade weights, never counting rejected dates", () => {
    const t = runTotals([
      { score: 1, implausibility: 0, grade: 3 },
      { score: 0, implausibility: 4, grade: 2 },
      { score: 0.5, implausibility: 3.5, grade: 3 },
      { score: 0, implausibility: 9, grade: 0 },
    ]);
    // hand: 1·ln 1 + 0.75·ln 0.05 + 1·ln(0.05 + 0.95·0.5)
    expect(t.logLikelihood).toBeCloseTo(0.75 * Math.log(0.05) + Math.log(0.525), 12);
    expect(t.nConstraints).toBe(3);
    expect(t.shareAgreeing).toBeCloseTo(2 / 3, 12);
    expect(t.maxImplausibility).toBe(4);
    expect(t.secondImplausibility).toBe(3.5);
    expect(t.ruledOut).toBe(true);
  });

  it("rules a run out when more than 4/81 of its constraints lie beyond 3 (Pukelsheim 1994, from memory)", () => {
    const items = (bad: number) =>
      Array.from({ length: 100 }, (_, i) => ({ score: 1, implausibility: i < bad ? 4 : 0, grade: 3 as const }));
    expect(runTotals(items(4)).ruledOut).toBe(false); // 4 % ≤ 4/81 ≈ 4.94 %
    expect(runTotals(items(5)).ruledOut).toBe(true); // 5 % > 4/81
  });

  it("lets one bad date pass the three-sigma cut-off when there are few constraints", () => {
    const t = runTotals([
      { score: 0, implausibility: 8, grade: 3 },
      { score: 1, implausibility: 2.9, grade: 3 },
    ]);
    expect(t.ruledOut).toBe(false);
  });

  it("states the weights and ε", () => {
    expect([3, 2, 1, 0, null].map(gradeWeight)).toEqual([1, 0.75, 0.25, 0, 0.5]);
    expect(logLikelihoodTerm(0, 1)).toBeCloseTo(Math.log(0.05), 12);
    expect(() => logLikelihoodTerm(0, 1, 0)).toThrow();
  });
});

describe("sites on a grid", () => {
  const xs = [0, 10, 20, 30, 40];
  const ys = [0, 10, 20];
  it("takes the cells within one cell width and the nearest cell", () => {
    // site at (20, 10): centre cell and its four neighbours
    expect(cellsWithin(xs, ys, 20, 10, 1).sort((a, b) => a - b)).toEqual([2, 6, 7, 8, 12]);
    expect(cellsWithin(xs, ys, 21, 10, 0)).toEqual([7]);
    expect(cellsWithin(xs, ys, 100, 10, 1)).toEqual([]);
  });

  it("handles a descending axis", () => {
    expect(cellsWithin(xs, [20, 10, 0], 0, 20, 0)).toEqual([0]);
  });

  it("gives the ice-free share under a thickness threshold", () => {
    const slice = new Float32Array(15);
    slice[7] = 500;
    slice[2] = 5;
    const cells = cellsWithin(xs, ys, 20, 10, 1);
    expect(iceFreeShare(slice, cells, { kind: "thickness", thresholdM: 10 })).toBeCloseTo(4 / 5, 12);
    expect(iceFreeShare(slice, cells, { kind: "thickness", thresholdM: 1 })).toBeCloseTo(3 / 5, 12);
  });
});

it("computes moments of a density", () => {
  const m = densityMoments(normalDensity(5000, 80));
  expect(m.mean).toBeCloseTo(5000, 6);
  expect(m.sd).toBeCloseTo(80, 0);
});

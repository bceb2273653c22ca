import { describe, expect, it } from "vitest";
import fc from "fast-check";
import { centralAgeModel, probabilityOlder, wardWilson } from "#app/science/consistency.ts";
import { chiSquareCdf, chiSquareQuantile, logGamma, regularizedGammaP } from "#app/science/stats.ts";
import { normalDensity } from "#app/science/calibration.ts";
import { expectQuoted } from "./check.ts";

describe("χ² distribution", () => {
  it("5 % critical values", () => {
    // standard χ² table values (CHECK_VALUES A7)
    expectQuoted(chiSquareQuantile(0.95, 1), 3.84, 2);
    expectQuoted(chiSquareQuantile(0.95, 2), 5.99, 2);
    expectQuoted(chiSquareQuantile(0.95, 3), 7.81, 2);
  });

  it("matches closed forms", () => {
    // df = 2: CDF = 1 − e^(−x/2); Γ(5) = 24; Γ(1/2) = √π
    for (const x of [0.1, 1, 3, 10, 40]) expect(chiSquareCdf(x, 2)).toBeCloseTo(1 - Math.exp(-x / 2), 12);
    expect(logGamma(5)).toBeCloseTo(Math.log(24), 12);
    expect(logGamma(0.5)).toBeCloseTo(0.5 * Math.log(Math.PI), 12);
    expect(regularizedGammaP(1, 2)).toBeCloseTo(1 - Math.exp(-2), 12);
    expect(chiSquareCdf(0, 3)).toBe(0);
  });

  it("quantile inverts the CDF", () => {
    fc.assert(
      fc.property(fc.double({ min: 0.01, max: 0.99, noNaN: true }), fc.integer({ min: 1, max: 60 }), (p, df) => {
        expect(chiSquareCdf(chiSquareQuantile(p, df), df)).toBeCloseTo(p, 9);
      }),
    );
  });
});

describe("Ward & Wilson test (A7)", () => {
  it("pools two equal-error dates", () => {
    // Ward & Wilson 1978 — from memory [derived]: mean of 1000 ± 30 and 1060 ± 30 is 1030 ± 21.2; T = 2
    const r = wardWilson([
      { age: 1000, error: 30 },
      { age: 1060, error: 30 },
    ]);
    expect(r.pooledMean).toBeCloseTo(1030, 10);
    expect(r.pooledError).toBeCloseTo(30 / Math.SQRT2, 10);
    expect(r.t).toBeCloseTo(2, 10);
    expect(r.df).toBe(1);
    // standard χ² table value 3.84 (df 1)
    expectQuoted(r.critical, 3.84, 2);
    expect(r.consistent).toBe(true);
  });

  it("fails replicates that disagree", () => {
    const r = wardWilson([
      { age: 10000, error: 40 },
      { age: 10300, error: 40 },
      { age: 10050, error: 50 },
    ]);
    // standard χ² table value 5.99 (df 2)
    expectQuoted(r.critical, 5.99, 2);
    expect(r.t).toBeGreaterThan(r.critical);
    expect(r.consistent).toBe(false);
    expect(r.pValue).toBeLessThan(0.05);
  });

  it("uses 7.81 for four dates and weights by inverse variance", () => {
    const r = wardWilson([
      { age: 500, error: 10 },
      { age: 520, error: 20 },
      { age: 490, error: 20 },
      { age: 505, error: 40 },
    ]);
    // standard χ² table value 7.81 (df 3)
    expectQuoted(r.critical, 7.81, 2);
    const w = [1 / 100, 1 / 400, 1 / 400, 1 / 1600];
    const mean = (500 * w[0] + 520 * w[1] + 490 * w[2] + 505 * w[3]) / (w[0] + w[1] + w[2] + w[3]);
    expect(r.pooledMean).toBeCloseTo(mean, 10);
    expect(r.consistent).toBe(true);
  });

  it("needs two dates", () => {
    expect(() => wardWilson([{ age: 1, error: 1 }])).toThrow();
  });
});

describe("central age model (B6)", () => {
  it("synthetic overdispersed set", () => {
    // Galbraith et al. 1999 — from memory [derived, synthetic]: CAM De 11.779 ± 1.143 Gy, overdispersion 25.6 %
    const r = centralAgeModel([10, 12, 15, 11, 9, 13, 20, 8].map((de) => ({ de, error: de * 0.1 })));
    expectQuoted(r.de, 11.779, 3);
    expectQuoted(r.deError, 1.143, 3);
    expectQuoted(r.overdispersion * 100, 25.6, 1);
  });

  it("identical values have no overdispersion", () => {
    // Galbraith et al. 1999 — from memory [derived, synthetic]: four of 10 ± 1 Gy → 10.000 ± 0.500, σ = 0
    const r = centralAgeModel([1, 2, 3, 4].map(() => ({ de: 10, error: 1 })));
    expectQuoted(r.de, 10.0, 3);
    expectQuoted(r.deError, 0.5, 3);
    expect(r.overdispersion).toBe(0);
  });

  it("the overdispersion solves the stated equation", () => {
    fc.assert(
      fc.property(
        fc.array(
          fc.record({ de: fc.double({ min: 1, max: 200, noNaN: true }), rel: fc.double({ min: 0.02, max: 0.3, noNaN: true }) }),
          {
            minLength: 3,
            maxLength: 30,
          },
        ),
        (xs) => {
          const doses = xs.map((x) => ({ de: x.de, error: x.de * x.rel }));
          const r = centralAgeModel(doses);
          if (r.overdispersion === 0) return;
          const w = doses.map((d) => 1 / (r.overdispersion ** 2 + (d.error / d.de) ** 2));
          const lhs = doses.reduce((acc, d, i) => acc + w[i] ** 2 * (Math.log(d.de) - r.logMean) ** 2, 0);
          const rhs = w.reduce((a, b) => a + b, 0);
          expect(lhs / rhs).toBeCloseTo(1, 6);
        },
      ),
    );
  });
});

describe("probabilityOlder", () => {
  it("gives the normal-difference probability for two normal densities", () => {
    // P(A > B) = Φ((μA − μB)/√(σA² + σB²)); 100 yr apart with σ 50 each → Φ(1.4142) = 0.9214
    const a = normalDensity(10100, 50);
    const b = normalDensity(10000, 50);
    expect(probabilityOlder(a, b)).toBeCloseTo(0.9214, 3);
    expect(probabilityOlder(a, b) + probabilityOlder(b, a)).toBeCloseTo(1, 6);
  });

  it("is one half for the same density and 0 or 1 for disjoint ones", () => {
    const a = normalDensity(5000, 30);
    expect(probabilityOlder(a, a)).toBeCloseTo(0.5, 6);
    const old = normalDensity(9000, 30);
    expect(probabilityOlder(old, a)).toBeCloseTo(1, 9);
    expect(probabilityOlder(a, old)).toBeCloseTo(0, 9);
  });
});

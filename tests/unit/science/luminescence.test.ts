import { describe, expect, it } from "vitest";
import fc from "fast-check";
import {
  CONVERSION_FACTORS,
  cosmicDoseRate,
  doseRate,
  dryDoseRates,
  luminescenceAge,
  luminescenceAgeToCalBp,
  overburden,
  waterFactor,
  type DoseRateInput,
} from "#app/science/luminescence.ts";
import { normalDensity, summariseDensity } from "#app/science/calibration.ts";
import { expectQuoted } from "./check.ts";

describe("luminescence age (B1)", () => {
  it("divides De by dose rate with relative errors in quadrature", () => {
    // Aitken 1985 — from memory [derived]: 50 Gy / 2.5 Gy/ka = 20.0 ka; 5 % and 4 % → 6.40 % = 1.28 ka
    const a = luminescenceAge({ value: 50, error: 2.5 }, { value: 2.5, error: 0.1 });
    expectQuoted(a.ageKa, 20.0, 1);
    expectQuoted(a.relativeError * 100, 6.4, 2);
    expectQuoted(a.errorKa, 1.28, 2);
  });

  it("rejects non-positive De or dose rate", () => {
    expect(() => luminescenceAge({ value: 0, error: 1 }, { value: 2, error: 0.1 })).toThrow();
    expect(() => luminescenceAge({ value: 10, error: 1 }, { value: -2, error: 0.1 })).toThrow();
  });
});

describe("year of measurement (B5, common practice)", () => {
  it("converts to cal BP", () => {
    // common practice (CHECK_VALUES B5): 12.000 ka measured in 2015 → 11,935 BP
    expect(luminescenceAgeToCalBp(12.0, 0.5, 2015)).toEqual({ calBp: 11935, error: 500 });
  });

  it("gives a normal calendar density with the expected summary", () => {
    const { calBp, error } = luminescenceAgeToCalBp(12.0, 0.05, 2015);
    const s = summariseDensity(normalDensity(calBp, error));
    expect(s.medianCalBp).toBeCloseTo(11935, 6);
    expect(s.hpd68).toEqual([{ from: 11985, to: 11885, p: expect.closeTo(0.683, 2) }]);
  });
});

describe("conversion factors (B2)", () => {
  it("each table gives its own dose rates per unit of each element", () => {
    // Guérin, Mercier & Adamiec 2011; Adamiec & Aitken 1998 — from memory, CHECK_VALUES B2:
    // one unit of a single element gives its factor [derived]
    expectQuoted(dryDoseRates(1, 0, 0, "guerin2011").beta, 0.7982, 4);
    expectQuoted(dryDoseRates(0, 0, 1, "guerin2011").gamma, 0.0479, 4);
    expectQuoted(dryDoseRates(0, 1, 0, "adamiec1998").alpha, 2.78, 2);
    expectQuoted(dryDoseRates(0, 0, 1, "adamiec1998").gamma, 0.0514, 4);
    expectQuoted(dryDoseRates(1, 0, 0, "adamiec1998").gamma, 0.243, 3);
    expectQuoted(dryDoseRates(0, 1, 0, "adamiec1998").gamma, 0.113, 3);
    expect(Object.keys(CONVERSION_FACTORS).sort()).toEqual(["adamiec1998", "guerin2011"]);
  });

  it("dry dose rates for K 2 %, U 2 ppm, Th 8 ppm", () => {
    // Guérin, Mercier & Adamiec 2011 — from memory [derived]: β 2.1094, γ 1.1046, α 11.490 Gy/ka
    const d = dryDoseRates(2, 2, 8, "guerin2011");
    expectQuoted(d.beta, 2.1094, 4);
    expectQuoted(d.gamma, 1.1046, 4);
    expectQuoted(d.alpha, 11.49, 3);
    const old = dryDoseRates(2, 2, 8, "adamiec1998");
    // Adamiec & Aitken 1998 — from memory [derived from the B2 table]: β 2.0848, γ 1.1232 Gy/ka
    expectQuoted(old.beta, 2.0848, 4);
    expectQuoted(old.gamma, 1.1232, 4);
    expect(old.beta).not.toBeCloseTo(d.beta, 3);
  });
});

describe("water (B3)", () => {
  it("attenuation factors for W = 0.20", () => {
    // Zimmerman 1971; Aitken 1985 [derived]: 0.7692 (α), 0.8000 (β), 0.8143 (γ)
    expectQuoted(waterFactor("alpha", 0.2), 0.7692, 4);
    expectQuoted(waterFactor("beta", 0.2), 0.8, 4);
    expectQuoted(waterFactor("gamma", 0.2), 0.8143, 4);
  });

  it("B2's example with W = 0.10", () => {
    // Zimmerman 1971 with Guérin et al. 2011 — from memory [derived]: β 1.8750, γ 0.9916 Gy/ka
    const r = doseRate({
      k: { value: 2, error: 0 },
      u: { value: 2, error: 0 },
      th: { value: 8, error: 0 },
      water: { value: 0.1, error: 0 },
      burial: { depthM: 2, density: 1 },
    });
    expectQuoted(r.beta, 1.875, 4);
    expectQuoted(r.gamma, 0.9916, 4);
    expect(r.factors).toBe("guerin2011");
  });
});

describe("cosmic dose rate (B4)", () => {
  it("decreases with depth", () => {
    fc.assert(
      fc.property(fc.double({ min: 0, max: 100, noNaN: true }), fc.double({ min: 0.01, max: 10, noNaN: true }), (x, dx) => {
        expect(cosmicDoseRate(x + dx)).toBeLessThan(cosmicDoseRate(x));
      }),
    );
  });

  it("the breakdown keeps the shallow-burial note", () => {
    // Prescott & Hutton 1994 — from memory: valid above 1.67 hg/cm²
    const r = doseRate({
      k: { value: 1, error: 0 },
      u: { value: 1, error: 0 },
      th: { value: 1, error: 0 },
      water: { value: 0, error: 0 },
      burial: { depthM: 0.5, density: 1.8 },
    });
    expect(r.cosmicWithinValidity).toBe(false);
    expect(r.notes.join(" ")).toMatch(/below 1.67 hg\/cm²/);
    expect(overburden(0.5, 1.8)).toBeCloseTo(0.9, 12);
  });
});

describe("dose-rate breakdown", () => {
  const base: DoseRateInput = {
    k: { value: 1.5, error: 0.05 },
    u: { value: 2.0, error: 0.1 },
    th: { value: 7.0, error: 0.3 },
    water: { value: 0.15, error: 0.05 },
    burial: { depthM: 3, depthError: 0.1, density: 1.9, densityError: 0.1 },
  };

  it("sums its components and ignores alpha by default", () => {
    const r = doseRate(base);
    expect(r.alpha).toBe(0);
    expect(r.total).toBeCloseTo(r.beta + r.gamma + r.cosmic, 12);
    expect(r.notes.join(" ")).toMatch(/Alpha contribution ignored/);
    expect(r.cosmic).toBeCloseTo(cosmicDoseRate(3 * 1.9), 12);
  });

  it("propagates input errors as the quadrature of partial contributions", () => {
    const r = doseRate(base);
    // Independent check by finite differences of the total against each input.
    const total = (patch: (x: DoseRateInput) => DoseRateInput) => doseRate(patch(structuredClone(base))).total;
    const h = 1e-6;
    const parts = [
      ((total((x) => ({ ...x, k: { ...x.k, value: x.k.value + h } })) - r.total) / h) * base.k.error,
      ((total((x) => ({ ...x, u: { ...x.u, value: x.u.value + h } })) - r.total) / h) * base.u.error,
      ((total((x) => ({ ...x, th: { ...x.th, value: x.th.value + h } })) - r.total) / h) * base.th.error,
      ((total((x) => ({ ...x, water: { ...x.water, value: x.water.value + h } })) - r.total) / h) * base.water.error,
      r.cosmicError,
    ];
    expect(r.totalError).toBeCloseTo(Math.hypot(...parts), 5);
    expect(r.totalError).toBeGreaterThan(Math.max(r.betaError, r.gammaError));
  });

  it("applies the beta attenuation factor and an a-value when given", () => {
    const plain = doseRate(base);
    const att = doseRate({ ...base, betaAttenuation: 0.9 });
    expect(att.beta).toBeCloseTo(plain.beta * 0.9, 12);
    expect(att.gamma).toBe(plain.gamma);
    const fine = doseRate({ ...base, alpha: { aValue: 0.08, aValueError: 0.01 } });
    const dry = dryDoseRates(1.5, 2, 7);
    expect(fine.alpha).toBeCloseTo(0.08 * dry.alpha * waterFactor("alpha", 0.15), 12);
    expect(fine.notes.join(" ")).not.toMatch(/Alpha contribution ignored/);
    expect(fine.totalError).toBeGreaterThan(plain.totalError);
  });

  it("records the factor table used", () => {
    expect(doseRate({ ...base, factors: "adamiec1998" }).factors).toBe("adamiec1998");
  });

  it("rejects negative concentrations", () => {
    expect(() => doseRate({ ...base, k: { value: -1, error: 0 } })).toThrow(/K/);
  });
});

import { describe, expect, it } from "vitest";
import { fullDoseRate, type DoseRateSample } from "#app/science/dose-rate.ts";
import { betaAbsorbedFraction, etchFactor, RB_BETA_GY_PER_KA_PER_PPM } from "#app/science/dose-rate-factors.ts";
import { ASSUMED_ERRORS } from "#app/science/dose-rate-inputs.ts";
import { cosmicDoseRate } from "#app/science/cosmic.ts";
import { doseRate } from "#app/science/luminescence.ts";
import { expectQuoted } from "./check.ts";
import { normalSampler, sd } from "./random.ts";

/** Quartz, 200 µm, etched, K 2 %, U 2 ppm, Th 8 ppm, W 0.10: CHECK_VALUES B2/B3's example with grains. */
const quartz: DoseRateSample = {
  k: { value: 2, error: 0.1 },
  u: { value: 2, error: 0.2 },
  th: { value: 8, error: 0.5 },
  rb: { value: 100, error: 10 },
  water: { value: 0.1, error: 0.05 },
  mineral: "quartz",
  grain: { kind: "coarse", diameterUm: 200, etchUm: 0 },
  depthM: { value: 3, error: 0.2 },
  density: { value: 1.9, error: 0.1 },
};

function get(r: ReturnType<typeof fullDoseRate>, key: string): number {
  return r.components.find((c) => c.key === key)!.value;
}

describe("grain-size beta attenuation (Mejdahl 1979, from memory)", () => {
  it("reads the table at its nodes and interpolates between them", () => {
    // Mejdahl 1979 — from memory, not confirmed here: 200 µm → K 0.933, U 0.839, Th 0.784
    expect(betaAbsorbedFraction("k", 200)).toBeCloseTo(0.933, 6);
    expect(betaAbsorbedFraction("u", 200)).toBeCloseTo(0.839, 6);
    expect(betaAbsorbedFraction("th", 200)).toBeCloseTo(0.784, 6);
    const mid = betaAbsorbedFraction("k", Math.sqrt(150 * 200));
    expect(mid).toBeCloseTo((0.95 + 0.933) / 2, 6);
    // Larger grains keep less of the beta dose; U and Th betas are softer than K's.
    expect(betaAbsorbedFraction("k", 500)).toBeLessThan(betaAbsorbedFraction("k", 100));
    expect(betaAbsorbedFraction("th", 300)).toBeLessThan(betaAbsorbedFraction("u", 300));
  });

  it("etching removes the rind with the most dose: a factor just below 1, more for softer betas", () => {
    // derived from the slab approximation stated in dose-rate-factors.ts
    const k = etchFactor("k", 200, 10);
    const th = etchFactor("th", 200, 10);
    expect(k).toBeLessThan(1);
    expect(k).toBeGreaterThan(0.98);
    expect(th).toBeLessThan(k);
    expect(etchFactor("k", 200, 0)).toBe(1);
    expect(() => etchFactor("k", 20, 10)).toThrow(/half the grain/);
  });
});

describe("Rb beta factor (derived from nuclear data, from memory)", () => {
  it("is about 3.6e-4 Gy/ka per ppm, i.e. 0.018 Gy/ka for 50 ppm", () => {
    // ⁸⁷Rb 27.83 %, T½ 4.97e10 yr, mean β 81.7 keV — from memory; hand calculation: 3.60e-4
    expectQuoted(RB_BETA_GY_PER_KA_PER_PPM * 1e4, 3.6, 1);
    expectQuoted(RB_BETA_GY_PER_KA_PER_PPM * 50, 0.018, 3);
  });
});

describe("full dose rate: values", () => {
  it("beta attenuated per element, gamma unattenuated, cosmic from depth × density", () => {
    const r = fullDoseRate(quartz);
    // Guérin et al. 2011 with Zimmerman 1971 [derived, CHECK_VALUES B3]: wet β per element at W 0.10
    // K 1.41902, U 0.25902, Th 0.19698 (sum 1.8750); γ 0.9916 Gy/ka
    const betaExpected = 1.41902 * 0.933 + 0.25902 * 0.839 + 0.19698 * 0.784 + (100 * 3.6e-4 * 0.784) / 1.125;
    expect(get(r, "beta")).toBeCloseTo(betaExpected, 3);
    expectQuoted(get(r, "gamma"), 0.9916, 4);
    expect(get(r, "alpha")).toBe(0);
    expect(get(r, "internal")).toBe(0);
    // Prescott & Hutton 1994 [from memory]: no site → sea level, 55°
    expect(get(r, "cosmic")).toBeCloseTo(cosmicDoseRate(5.7), 12);
    expect(r.total).toBeCloseTo(
      r.components.reduce((a, c) => a + c.value, 0),
      12,
    );
    expect(r.components.reduce((a, c) => a + c.share, 0)).toBeCloseTo(1, 12);
    expect(r.citations.map((c) => c.source).join(" ")).toMatch(
      /Guérin, Mercier & Adamiec 2011.*Mejdahl 1979.*Prescott & Hutton 1994/,
    );
  });

  it("Adamiec & Aitken 1998 gamma factors reach the gamma dose rate", () => {
    // Adamiec & Aitken 1998 (CHECK_VALUES B2, from memory) [derived]: dry γ for K 2 %, U 2 ppm,
    // Th 8 ppm = 2·0.243 + 2·0.113 + 8·0.0514 = 1.1232 Gy/ka
    const dry = { ...quartz, water: { value: 0, error: 0 }, factors: "adamiec1998" as const };
    const r = fullDoseRate(dry);
    expectQuoted(get(r, "gamma"), 1.1232, 4);
    const k = fullDoseRate({ ...dry, u: { value: 0, error: 0 }, th: { value: 0, error: 0 } });
    expectQuoted(get(k, "gamma"), 0.486, 4);
    const u = fullDoseRate({ ...dry, k: { value: 0, error: 0 }, rb: { value: 0, error: 0 }, th: { value: 0, error: 0 } });
    expectQuoted(get(u, "gamma"), 0.226, 4);
  });

  it("fine grains get alpha scaled by the a-value", () => {
    const fine: DoseRateSample = { ...quartz, grain: { kind: "fine", diameterUm: 8 }, aValue: { value: 0.08, error: 0.01 } };
    const r = fullDoseRate(fine);
    // Guérin et al. 2011 [derived, CHECK_VALUES B2]: dry α 11.490 Gy/ka; Zimmerman 1971: W 0.10 → 1/1.15
    expectQuoted(get(r, "alpha"), (0.08 * 11.49) / 1.15, 3);
    const a = r.sources.find((s) => s.key === "aValue")!;
    expect(a.contribution).toBeCloseTo((get(r, "alpha") / 0.08) * 0.01, 12);
    expect(() => fullDoseRate({ ...fine, aValue: null })).toThrow(/a-value/);
  });

  it("K-feldspar gets an internal dose from 12.5 ± 0.5 % K (Huntley & Baril 1997), assumed when not given", () => {
    const fs: DoseRateSample = { ...quartz, mineral: "k-feldspar" };
    const r = fullDoseRate(fs);
    // Huntley & Baril 1997: 12.5 ± 0.5 % K; Huntley & Hancock 2001 (from memory): 400 ± 100 ppm Rb.
    // Internal β = (1 − absorbed fraction) · factor · content, Mejdahl 1979 at 200 µm (from memory).
    const expected = (1 - 0.933) * 0.7982 * 12.5 + (1 - 0.784) * 3.6e-4 * 400;
    expect(get(r, "internal")).toBeCloseTo(expected, 3);
    const ik = r.sources.find((s) => s.key === "internalK")!;
    expect(ik.assumed).toBe(true);
    expect(ik.error).toBe(0.5);
    expect(ik.contribution).toBeCloseTo((1 - 0.933) * 0.7982 * 0.5, 4);
    // The internal error reaches the total's error.
    const without = fullDoseRate({ ...fs, internalK: { value: 12.5, error: 0 }, internalRb: { value: 400, error: 0 } });
    expect(r.totalError ** 2 - without.totalError ** 2).toBeCloseTo(
      ik.contribution ** 2 + r.sources.find((s) => s.key === "internalRb")!.contribution ** 2,
      10,
    );
  });

  it("Rb is estimated from K when not measured, and said to be", () => {
    const r = fullDoseRate({ ...quartz, rb: null });
    const rb = r.sources.find((s) => s.key === "rb")!;
    // K/Rb ≈ 200 (common practice, from memory): 2 % K → 100 ppm Rb, ±25 %
    expect(rb.value).toBeCloseTo(100, 9);
    expect(rb.error).toBeCloseTo(25, 9);
    expect(rb.assumed).toBe(true);
    expect(rb.assumption).toMatch(/estimated from K/);
  });

  it("a lab's cosmic value replaces the formula, with its own error", () => {
    const r = fullDoseRate({ ...quartz, labCosmic: { value: 0.2, error: 0.02 } });
    expect(get(r, "cosmic")).toBe(0.2);
    expect(r.sources.find((s) => s.key === "labCosmic")!.contribution).toBeCloseTo(0.02, 12);
    expect(r.sources.some((s) => s.key === "depth")).toBe(false);
    expect(r.citations.some((c) => c.source === "the lab's own value")).toBe(true);
  });

  it("keeps the shallow-burial caution (below 1.67 hg/cm²)", () => {
    // Prescott & Hutton 1994 — from memory: valid above 1.67 hg/cm²
    const r = fullDoseRate({ ...quartz, depthM: { value: 0.5, error: 0.05 } });
    expect(r.cautions.join(" ")).toMatch(/below 1.67 hg\/cm²/);
    expect(fullDoseRate(quartz).cautions.join(" ")).not.toMatch(/hg\/cm²/);
  });

  it("refuses negative inputs naming the field", () => {
    expect(() => fullDoseRate({ ...quartz, k: { value: -1, error: 0 } })).toThrow(/K/);
    expect(() => fullDoseRate({ ...quartz, water: { value: 0.1, error: -0.1 } })).toThrow(/Water/);
  });
});

describe("full dose rate: errors", () => {
  it("assumes documented defaults when a lab gives no error, and marks them", () => {
    const bare: DoseRateSample = {
      ...quartz,
      k: { value: 2 },
      u: { value: 2 },
      th: { value: 8 },
      rb: { value: 100 },
      water: { value: 0.1 },
      depthM: { value: 3 },
      density: { value: 1.9 },
    };
    const r = fullDoseRate(bare);
    const by = (k: string) => r.sources.find((s) => s.key === k)!;
    // Defaults (common practice, assumed): K ±5 %, U and Th ±10 %, water ±0.05, depth ±10 %, density ±0.1
    expect(by("k").error).toBeCloseTo(0.1, 12);
    expect(by("u").error).toBeCloseTo(0.2, 12);
    expect(by("th").error).toBeCloseTo(0.8, 12);
    expect(by("water").error).toBe(0.05);
    expect(by("depth").error).toBeCloseTo(0.3, 12);
    expect(by("density").error).toBe(0.1);
    for (const k of ["k", "u", "th", "rb", "water", "depth", "density"]) {
      expect(by(k).assumed).toBe(true);
      expect(by(k).assumption).toMatch(/assumed/);
    }
    expect(ASSUMED_ERRORS.k.text).toMatch(/5 %/);
    // A typical field sample then carries a 4–7 % dose-rate error, not the 0.4–1.7 % of a cosmic-only allowance.
    expect(r.totalError / r.total).toBeGreaterThan(0.04);
    expect(r.totalError / r.total).toBeLessThan(0.07);
  });

  it("shares of the variance add to 1, and the cosmic formula allowance is 10 % of the cosmic term", () => {
    const r = fullDoseRate(quartz);
    expect(r.sources.reduce((a, s) => a + s.varianceShare, 0)).toBeCloseTo(1, 12);
    const f = r.sources.find((s) => s.key === "cosmicFormula")!;
    // common practice: 10 % of the cosmic dose rate
    expect(f.contribution).toBeCloseTo(0.1 * cosmicDoseRate(5.7), 12);
    expect(f.assumed).toBe(true);
  });

  it("depth and density errors reach the error through the cosmic formula's slope", () => {
    const r = fullDoseRate(quartz);
    // Independent: central finite difference of the sea-level formula at x = 3 × 1.9.
    const h = 1e-5;
    const slope = (cosmicDoseRate(5.7 + h) - cosmicDoseRate(5.7 - h)) / (2 * h);
    expect(r.sources.find((s) => s.key === "depth")!.contribution).toBeCloseTo(Math.abs(slope) * 1.9 * 0.2, 8);
    expect(r.sources.find((s) => s.key === "density")!.contribution).toBeCloseTo(Math.abs(slope) * 3 * 0.1, 8);
  });

  it("the analytical error agrees with a Monte Carlo over every input", () => {
    const fs: DoseRateSample = {
      ...quartz,
      mineral: "k-feldspar",
      grain: { kind: "fine", diameterUm: 8 },
      aValue: { value: 0.09, error: 0.02 },
      internalK: { value: 12.5, error: 0.5 },
      internalRb: { value: 400, error: 100 },
    };
    const analytic = fullDoseRate(fs);
    const z = normalSampler(20261201);
    const totals: number[] = [];
    const n = 20000;
    const exact = (v: number) => ({ value: v, error: 0 });
    for (let i = 0; i < n; i++) {
      const r = fullDoseRate({
        ...fs,
        k: exact(2 + 0.1 * z()),
        u: exact(2 + 0.2 * z()),
        th: exact(8 + 0.5 * z()),
        rb: exact(100 + 10 * z()),
        water: exact(Math.max(0, 0.1 + 0.05 * z())),
        aValue: exact(0.09 + 0.02 * z()),
        internalK: exact(12.5 + 0.5 * z()),
        internalRb: exact(400 + 100 * z()),
        depthM: exact(3 + 0.2 * z()),
        density: exact(1.9 + 0.1 * z()),
      });
      // The formula allowance multiplies the cosmic term.
      totals.push(r.total + 0.1 * get(r, "cosmic") * z());
    }
    expect(sd(totals) / analytic.totalError).toBeGreaterThan(0.97);
    expect(sd(totals) / analytic.totalError).toBeLessThan(1.03);
  });
});

describe("the earlier dose rate (kept for callers with bare K, U, Th)", () => {
  const base = {
    k: { value: 1.5, error: 0.05 },
    u: { value: 2.0, error: 0.1 },
    th: { value: 7.0, error: 0.3 },
    water: { value: 0.15, error: 0.05 },
    burial: { depthM: 3, depthError: 0.1, density: 1.9, densityError: 0.1 },
  };
  it("adds an internal dose rate's error to the total's", () => {
    const a = doseRate(base);
    const b = doseRate({ ...base, internal: { value: 0.5, error: 0.12 } });
    expect(b.totalError ** 2 - a.totalError ** 2).toBeCloseTo(0.12 ** 2, 10);
    expect(b.total - a.total).toBeCloseTo(0.5, 12);
  });
  it("carries the 10 % cosmic allowance", () => {
    const r = doseRate({ ...base, burial: { depthM: 3, density: 1.9 } });
    expect(r.cosmicError).toBeCloseTo(0.1 * cosmicDoseRate(5.7), 12);
  });
});

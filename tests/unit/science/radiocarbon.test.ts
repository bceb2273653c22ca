import { describe, expect, it } from "vitest";
import fc from "fast-check";
import {
  ageErrorToF14cError,
  ageFromF14c,
  ageToF14c,
  f14cToAge,
  f14cToD14c,
  f14cToDelta14c,
  f14cToPmc,
  interpretRadiocarbon,
  limitAgeFromF14c,
  normaliseAge,
  normaliseMeasurement,
  normalisationShiftYears,
  pmcToF14c,
} from "#app/science/radiocarbon.ts";
import { expectQuoted } from "./check.ts";

describe("F14C and conventional age (A1)", () => {
  it("matches the derived check values", () => {
    // Stuiver & Polach 1977 [derived]
    expectQuoted(f14cToAge(0.5), 5568.05, 2);
    expectQuoted(f14cToAge(0.25), 11136.1, 1);
    expectQuoted(f14cToAge(0.1), 18496.7, 1);
    expectQuoted(f14cToAge(0.01), 36993.3, 1);
    // pMC 110 → −765.6 yr, Stuiver & Polach 1977 [derived]
    expectQuoted(f14cToAge(pmcToF14c(110)), -765.6, 1);
    // F = 0.5 ± 0.0025 → σ 40.17 yr, Stuiver & Polach 1977 [derived]
    expectQuoted(ageFromF14c(0.5, 0.0025).error, 40.17, 2);
    // F = 0.5 → D14C −500 ‰, Reimer, Brown & Reimer 2004 [derived]
    expect(f14cToD14c(0.5)).toBeCloseTo(-500, 10);
    expect(f14cToPmc(0.5)).toBeCloseTo(50, 12);
  });

  it("Δ14C decay-corrects with the 5730-yr mean-life from the year of growth", () => {
    // Reimer, Brown & Reimer 2004 [published formula]: growth in AD 1950 leaves no decay correction
    expect(f14cToDelta14c(0.9, 1950)).toBeCloseTo(-100, 10);
    // one Cambridge mean-life (8267 yr) before 1950: F·e − 1 [derived]
    expect(f14cToDelta14c(0.5, 1950 - 8267)).toBeCloseTo((0.5 * Math.E - 1) * 1000, 9);
  });

  it("round-trips F14C ↔ age and their errors", () => {
    fc.assert(
      fc.property(fc.double({ min: 1e-4, max: 2, noNaN: true }), fc.double({ min: 1e-6, max: 0.01, noNaN: true }), (f, sf) => {
        const { age, error } = ageFromF14c(f, sf);
        expect(ageToF14c(age)).toBeCloseTo(f, 12);
        expect(ageErrorToF14cError(age, error) / sf).toBeCloseTo(1, 10);
      }),
    );
  });
});

describe("δ13C normalisation (A2)", () => {
  it("matches the derived shifts", () => {
    // Stuiver & Polach 1977 [derived]: δ13C = 0 ‰ → +406.8 yr (exact), +412.0 (linear)
    expectQuoted(normalisationShiftYears(0), 406.8, 1);
    expectQuoted(normalisationShiftYears(0, "linear"), 412.0, 1);
    // Stuiver & Polach 1977 [derived]: δ13C = −20 ‰ → +80.7 yr. CHECK_VALUES does not name the
    // form; 80.7 is what the linear form gives, while the exact form gives 82.18 (same source's formula).
    expectQuoted(normalisationShiftYears(-20, "linear"), 80.7, 1);
    expectQuoted(normalisationShiftYears(-20), 82.18, 2);
    // Stuiver & Polach 1977 [derived]: about 16 yr per ‰
    expect(normalisationShiftYears(-24) - normalisationShiftYears(-25)).toBeGreaterThan(15.5);
    expect(normalisationShiftYears(-24) - normalisationShiftYears(-25)).toBeLessThan(16.5);
    expect(normalisationShiftYears(-25)).toBeCloseTo(0, 12);
    expect(normaliseAge(10000, 0)).toBeCloseTo(10406.76, 1);
  });

  it("normalises an unnormalised age once, and leaves a conventional age alone", () => {
    // common practice: a reported conventional age is already normalised
    const raw = normaliseMeasurement({ measurement: { age: 10000, error: 40 }, d13c: 0, alreadyNormalised: false });
    expect(raw.normalisedHere).toBe(true);
    expect(raw.age).toBeCloseTo(10406.8, 1);
    expect(raw.ageError).toBe(40);
    const conv = normaliseMeasurement({ measurement: { age: 10000, error: 40 }, d13c: 0, alreadyNormalised: true });
    expect(conv.normalisedHere).toBe(false);
    expect(conv.age).toBe(10000);
    expect(conv.correctionYears).toBe(0);
  });

  it("scales σ_F with F, so the age error is unchanged by normalisation", () => {
    // Stuiver & Polach 1977 [derived]: δ13C = 0 ‰ → factor (0.975)² = 0.950625; F 0.5 ± 0.0025
    const n = normaliseMeasurement({ measurement: { f14c: 0.5, error: 0.0025 }, d13c: 0, alreadyNormalised: false });
    expect(n.f14c).toBeCloseTo(0.4753125, 10);
    expect(n.f14cError).toBeCloseTo(0.002376563, 8);
    // σ_t = 8033 σ_F / F is the same before and after: 40.17 yr (A1 check value)
    expectQuoted(n.ageError, 40.17, 2);
  });

  it("brings an age normalised to 0 ‰ (legacy shell ages) to −25 ‰", () => {
    // Stuiver & Polach 1977 [derived, A2]: the 0 ‰ reference differs by +406.8 yr (exact form)
    const n = normaliseMeasurement({
      measurement: { age: 10000, error: 40 },
      alreadyNormalised: true,
      normalisedToZeroPermil: true,
    });
    expectQuoted(n.age, 10406.8, 1);
    expect(n.ageError).toBe(40);
    const r = interpretRadiocarbon({
      measurement: { age: 10000, error: 40 },
      alreadyNormalised: true,
      normalisedToZeroPermil: true,
    });
    expect(r).toMatchObject({ kind: "age", age: expect.closeTo(10406.76, 1) });
    if (r.kind === "age") expect(r.message).toMatch(/0 ‰ reference/);
  });

  it("gives the same age from F14C or from the age", () => {
    fc.assert(
      fc.property(fc.double({ min: 0.01, max: 1, noNaN: true }), fc.double({ min: -35, max: 5, noNaN: true }), (f, d13c) => {
        const viaF = normaliseMeasurement({ measurement: { f14c: f, error: 0.001 }, d13c, alreadyNormalised: false });
        const viaAge = normaliseMeasurement({ measurement: { age: f14cToAge(f), error: 10 }, d13c, alreadyNormalised: false });
        expect(viaF.age).toBeCloseTo(viaAge.age, 6);
      }),
    );
  });

  it("refuses to normalise without δ13C", () => {
    const r = interpretRadiocarbon({ measurement: { age: 5000, error: 30 }, alreadyNormalised: false });
    expect(r.kind).toBe("invalid");
    if (r.kind === "invalid") {
      expect(r.field).toBe("d13c");
      expect(r.message).toMatch(/δ13C/);
    }
  });
});

describe("interpretRadiocarbon", () => {
  it("returns a calibratable age for an ordinary conventional age", () => {
    const r = interpretRadiocarbon({ measurement: { age: 10250, error: 45 }, alreadyNormalised: true });
    expect(r).toMatchObject({ kind: "age", age: 10250, error: 45, normalisedHere: false });
  });

  it("turns an F14C near background into a greater-than limit (A1)", () => {
    // van der Plicht & Hogg 2006 — from memory: F = 0.0010 ± 0.0008 → "> 47,814 yr BP"
    expect(limitAgeFromF14c(0.001, 0.0008)).toBeCloseTo(47814, 0);
    const r = interpretRadiocarbon({ measurement: { f14c: 0.001, error: 0.0008 }, alreadyNormalised: true });
    expect(r.kind).toBe("limit");
    if (r.kind === "limit") {
      expect(r.minAge).toBeCloseTo(47814, 0);
      expect(r.message).toContain("47,814");
    }
  });

  it("keeps F just above 2σ as a finite age", () => {
    const r = interpretRadiocarbon({ measurement: { f14c: 0.0017, error: 0.0008 }, alreadyNormalised: true });
    expect(r.kind).toBe("age");
  });

  it("treats a slightly negative blank-corrected F14C as a limit, and refuses impossible ones", () => {
    const r = interpretRadiocarbon({ measurement: { f14c: -0.0002, error: 0.0008 }, alreadyNormalised: true });
    expect(r).toMatchObject({ kind: "limit", minAge: expect.closeTo(f14cToAge(0.0014), 6) });
    expect(interpretRadiocarbon({ measurement: { f14c: -0.01, error: 0.001 }, alreadyNormalised: true })).toMatchObject({
      kind: "invalid",
      field: "f14c",
    });
    expect(interpretRadiocarbon({ measurement: { f14c: 0, error: 0 }, alreadyNormalised: true })).toMatchObject({
      kind: "invalid",
      field: "f14c",
    });
  });

  it("stores a lab-reported greater-than age as a limit", () => {
    const r = interpretRadiocarbon({ measurement: { age: 45000, error: 0 }, alreadyNormalised: true, reportedAsLimit: true });
    expect(r).toMatchObject({ kind: "limit", minAge: 45000 });
  });

  it("computes a lab's greater-than given as F14C from F + 2σ (A1)", () => {
    // van der Plicht & Hogg 2006 — from memory (CHECK_VALUES A1): F = 0.0010 ± 0.0008 → "> 47,814 yr BP"
    const r = interpretRadiocarbon({
      measurement: { f14c: 0.001, error: 0.0008 },
      alreadyNormalised: true,
      reportedAsLimit: true,
    });
    expect(r).toMatchObject({ kind: "limit", minAge: expect.closeTo(47814, 0) });
    // Even when F itself is well above 2σ, a reported limit is the age of F + 2σ, not of F.
    const firm = interpretRadiocarbon({
      measurement: { f14c: 0.01, error: 0.001 },
      alreadyNormalised: true,
      reportedAsLimit: true,
    });
    expect(firm).toMatchObject({ kind: "limit", minAge: expect.closeTo(-8033 * Math.log(0.012), 6) });
  });

  it("flags post-bomb F14C as not calibratable (A1)", () => {
    // Stuiver & Polach 1977 [derived]: pMC 110 → −765.6 yr
    const r = interpretRadiocarbon({ measurement: { f14c: 1.1, error: 0.003 }, alreadyNormalised: true });
    expect(r.kind).toBe("postbomb");
    if (r.kind === "postbomb") {
      expect(r.age).toBeCloseTo(-765.6, 1);
      expect(r.message).toMatch(/post-bomb/);
    }
    const neg = interpretRadiocarbon({ measurement: { age: -120, error: 20 }, alreadyNormalised: true });
    expect(neg.kind).toBe("postbomb");
  });

  it("is post-bomb only when F exceeds 1 by more than 2σ", () => {
    // common practice: 1.002 ± 0.003 is consistent with 1 and stays a (calibratable) age
    const r = interpretRadiocarbon({ measurement: { f14c: 1.002, error: 0.003 }, alreadyNormalised: true });
    expect(r.kind).toBe("age");
    expect(interpretRadiocarbon({ measurement: { f14c: 1.007, error: 0.003 }, alreadyNormalised: true }).kind).toBe("postbomb");
  });

  it("reports bad numbers as invalid, naming the field", () => {
    expect(interpretRadiocarbon({ measurement: { age: 5000, error: -3 }, alreadyNormalised: true })).toMatchObject({
      kind: "invalid",
      field: "error",
    });
    expect(interpretRadiocarbon({ measurement: { f14c: Number.NaN, error: 0.01 }, alreadyNormalised: true })).toMatchObject({
      kind: "invalid",
      field: "f14c",
    });
    expect(interpretRadiocarbon({ measurement: { age: 5000, error: 0 }, alreadyNormalised: true })).toMatchObject({
      kind: "invalid",
      field: "error",
    });
  });
});

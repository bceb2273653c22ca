import { describe, expect, it } from "vitest";
import { beyondCurve, calibrate, summariseDensity } from "#app/science/calibration.ts";
import { prepareCurve } from "#app/science/curve.ts";
import { ageToF14c, f14cToAge } from "#app/science/radiocarbon.ts";
import { appliedOffset, hemisphereWarning } from "#app/science/reservoir.ts";
import { directIntegration } from "#tests/support/curve-reference.ts";
import { loadCurve } from "./curve-files.ts";

const intcal = prepareCurve(loadCurve("intcal20"));
const marine = prepareCurve(loadCurve("marine20"));

describe("a real-curve reference value (independent direct integration over the CSV)", () => {
  it("10,250 ± 45 14C yr BP on IntCal20", () => {
    // Reference: computed independently in this test by direct numeric integration over
    // intcal20.csv (Reimer et al. 2020) with the A4 likelihood.
    const ref = directIntegration("intcal20.csv", { age: 10250, error: 45 });
    const r = calibrate(intcal, { age: 10250, error: 45 });
    expect(Math.abs(r.medianCalBp - ref.median)).toBeLessThan(0.5);
    expect(ref.median).toBeGreaterThan(11900);
    expect(ref.median).toBeLessThan(12100);
  });

  it("9,500 ± 40 on Marine20 matches too", () => {
    const ref = directIntegration("marine20.csv", { age: 9500, error: 40 });
    const r = calibrate(marine, { age: 9500, error: 40 });
    expect(Math.abs(r.medianCalBp - ref.median)).toBeLessThan(0.5);
  });
});

describe("dates at the curve's ends calibrate, truncated, with a note", () => {
  const cases = [
    {
      name: "90 ± 40 on IntCal20",
      curve: intcal,
      label: "IntCal20",
      age: 90,
      error: 40,
      end: /young end of IntCal20 \(0 cal BP\)/,
    },
    { name: "50 ± 30 on IntCal20", curve: intcal, label: "IntCal20", age: 50, error: 30, end: /young end/ },
    {
      name: "50,250 ± 400 on IntCal20",
      curve: intcal,
      label: "IntCal20",
      age: 50250,
      error: 400,
      end: /old end of IntCal20 \(55,000 cal BP\)/,
    },
    { name: "600 ± 30 on Marine20", curve: marine, label: "Marine20", age: 600, error: 30, end: /young end of Marine20/ },
  ];
  for (const c of cases) {
    it(c.name, () => {
      // The cases: each lies within two sigma of the curve's 14C range.
      const r = calibrate(c.curve, { age: c.age, error: c.error, curveLabel: c.label });
      expect(r.atCurveLimit).toBe(true);
      expect(r.notes.join(" ")).toMatch(c.end);
      const mass = r.hpd95.reduce((a, x) => a + x.p, 0);
      expect(mass).toBeGreaterThanOrEqual(0.954 - 1e-6);
    });
  }

  it("marks the range cut by the curve's end", () => {
    const r = calibrate(intcal, { age: 50250, error: 400 });
    expect(r.hpd95[0]).toMatchObject({ from: 55000, atCurveLimit: true });
    expect(calibrate(intcal, { age: 10250, error: 45 }).hpd95.some((x) => x.atCurveLimit)).toBe(false);
  });

  it("refuses only what cannot overlap the curve, says why, and names the curve by name", () => {
    const msg = beyondCurve(intcal, { age: 10, error: 20, curveLabel: "IntCal20" });
    expect(msg).toMatch(
      /cannot overlap it: even its age \+ 2σ \(55\) is younger than the curve reaches; IntCal20 covers 95–50,193/,
    );
    expect(beyondCurve(intcal, { age: 90, error: 40, curveLabel: "IntCal20" })).toBeNull();
    expect(() => calibrate(intcal, { age: 56000, error: 500, curveLabel: "IntCal20" })).toThrow(/IntCal20 covers/);
    expect(() => calibrate(intcal, { age: 56000, error: 500, curveLabel: "IntCal20" })).not.toThrow(/intcal20|\b3 covers/);
  });
});

describe("near background: calibration in F14C space (A1, A4)", () => {
  it("F14C 0.0040 ± 0.0008 matches a direct F14C-space integration", () => {
    // Reference: direct numeric integration in F14C space over intcal20.csv, in this test.
    const f = 0.004;
    const sf = 0.0008;
    const ref = directIntegration("intcal20.csv", { f14c: f, f14cError: sf });
    const age = f14cToAge(f);
    const r = calibrate(intcal, { age, error: (8033 * sf) / f, f14c: f, f14cError: sf });
    expect(r.inF14cSpace).toBe(true);
    expect(Math.abs(r.medianCalBp - ref.median)).toBeLessThan(1);
    expect(r.notes.join(" ")).toMatch(/F¹⁴C/);
    // The symmetric-age route differs by hundreds of years here, which is why F14C space is used.
    const viaAge = calibrate(intcal, { age, error: (8033 * sf) / f });
    expect(Math.abs(viaAge.medianCalBp - r.medianCalBp)).toBeGreaterThan(100);
  });

  it("uses age space above F14C 0.01", () => {
    const r = calibrate(intcal, { age: f14cToAge(0.2), error: 40, f14c: 0.2, f14cError: 0.001 });
    expect(r.inF14cSpace).toBe(false);
    expect(ageToF14c(f14cToAge(0.2))).toBeCloseTo(0.2, 12);
  });
});

describe("highest-density ranges: the smallest set reaching the level", () => {
  it("takes only as many tied years as the level needs", () => {
    // 10 equal years: 68.3 % needs 7 of them (0.70), not all 10; 95.4 % needs all 10.
    const flat = summariseDensity({ startCalBp: 100, values: new Float32Array(10).fill(0.1) });
    expect(flat.hpd68).toHaveLength(1);
    expect(flat.hpd68[0].p).toBeCloseTo(0.7, 6);
    expect(flat.hpd68[0].from - flat.hpd68[0].to + 1).toBe(7);
    expect(flat.hpd95[0].p).toBeCloseTo(1, 6);
  });

  it("grows a range at its edges when ties must be broken", () => {
    // A peak with shoulders of equal height: the tied shoulder years next to the peak are taken.
    const values = Float32Array.from([0.05, 0.05, 0.05, 0.05, 0.3, 0.3, 0.05, 0.05, 0.05, 0.05]);
    const s = summariseDensity({ startCalBp: 0, values: values.map((v) => v / 1.0) });
    // 0.6 from the peak; 68.3 % needs two shoulder years (0.70): one each side, contiguous.
    expect(s.hpd68).toEqual([{ from: 6, to: 3, p: expect.closeTo(0.7, 6) }]);
  });

  it("on the real curve the 68.3 % mass does not overshoot by more than one year's probability", () => {
    for (const [age, error] of [
      [2450, 30],
      [10250, 45],
      [11500, 80],
    ]) {
      const r = calibrate(intcal, { age, error });
      const v = Array.from(r.density.values);
      const p68 = r.hpd68.reduce((a, x) => a + x.p, 0);
      const max = Math.max(...v);
      expect(p68).toBeGreaterThanOrEqual(0.683 - 1e-6);
      expect(p68 - 0.683).toBeLessThanOrEqual(max + 1e-6);
    }
  });
});

describe("reservoir offsets beyond marine (A5, common practice)", () => {
  it("a freshwater offset on IntCal20 is applied like ΔR", () => {
    const off = appliedOffset("atmospheric", { freshwaterOffset: 350, freshwaterOffsetError: 60, deltaR: 81 });
    expect(off).toEqual({ deltaR: 350, deltaRError: 60, label: "freshwater offset 350 ± 60" });
    const a = calibrate(intcal, { age: 9600, error: 40, deltaR: off.deltaR, deltaRError: off.deltaRError });
    // Same as calibrating the age minus the offset with the offset's error in quadrature, on a
    // direct integration (independent): 9250 ± √(40² + 60²).
    const ref = directIntegration("intcal20.csv", { age: 9250, error: Math.hypot(40, 60) });
    expect(Math.abs(a.medianCalBp - ref.median)).toBeLessThan(0.5);
    expect(appliedOffset("marine", { freshwaterOffset: 350, deltaR: 81, deltaRError: 18 })).toEqual({
      deltaR: 81,
      deltaRError: 18,
      label: "ΔR 81 ± 18",
    });
    expect(appliedOffset("atmospheric", {}).deltaR).toBe(0);
  });

  it("warns for a southern-hemisphere site on a northern curve", () => {
    expect(hemisphereWarning(-45.2, "intcal20", "IntCal20")).toMatch(
      /southern hemisphere \(latitude 45.20° S\).*IntCal20, a northern-hemisphere curve/,
    );
    expect(hemisphereWarning(58.5, "intcal20")).toBeNull();
    expect(hemisphereWarning(-45.2, "marine20")).toBeNull();
    expect(hemisphereWarning(58.5, "shcal20", "SHCal20")).toMatch(/northern hemisphere/);
  });
});

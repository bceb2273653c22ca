import { describe, expect, it } from "vitest";
import {
  checkSpotValues,
  findRow,
  interpolateCurve,
  parseCurveCsv,
  prepareCurve,
  preparedCurveAt,
  SPOT_VALUES,
  validateCurve,
  type Curve,
} from "#app/science/curve.ts";
import { loadCurve } from "./curve-files.ts";

const HEADER = "cal_bp,c14_age,c14_sigma,delta14c,delta14c_sigma";

describe("parseCurveCsv", () => {
  it("sorts rows given in any order and ignores extra columns", () => {
    const r = parseCurveCsv(`${HEADER}\r\n20,120,5,1,1\n0,100,4,1,1\n\n10,110,6,1,1\n`, "t");
    expect(r.ok).toBe(true);
    if (!r.ok) return;
    expect(Array.from(r.curve.calBp)).toEqual([0, 10, 20]);
    expect(Array.from(r.curve.c14)).toEqual([100, 110, 120]);
    expect(Array.from(r.curve.sigma)).toEqual([4, 6, 5]);
  });

  it("finds columns by header name", () => {
    const r = parseCurveCsv("c14_sigma,cal_bp,c14_age\n5,0,100\n5,10,110\n", "t");
    expect(r.ok && Array.from(r.curve.c14)).toEqual([100, 110]);
  });

  it("reports non-numeric cells with their line", () => {
    const r = parseCurveCsv(`${HEADER}\n0,100,4\n10,abc,4\n20,,4\n`, "t");
    expect(r.ok).toBe(false);
    expect(r.issues).toEqual([
      { line: 3, message: 'Column c14_age is not a number ("abc").' },
      { line: 4, message: "Column c14_age is empty." },
    ]);
  });

  it("reports a missing column", () => {
    const r = parseCurveCsv("cal_bp,c14_age\n0,1\n", "t");
    expect(r.ok).toBe(false);
    expect(r.issues[0].message).toMatch(/c14_sigma/);
  });

  it("reports duplicate calendar ages, non-positive sigmas and gaps", () => {
    const r = parseCurveCsv(`${HEADER}\n0,100,4\n10,110,0\n10,111,4\n100,200,-1\n`, "t", { maxStep: 20 });
    expect(r.ok).toBe(false);
    const text = r.issues.map((i) => i.message).join("\n");
    expect(text).toMatch(/10 cal BP is 0; it must be positive/);
    expect(text).toMatch(/10 cal BP appears more than once/);
    expect(text).toMatch(/Gap of 90 years between 10 and 100 cal BP/);
    expect(text).toMatch(/100 cal BP is -1/);
    expect(r.issues.every((i) => typeof i.line === "number")).toBe(true);
  });

  it("rejects an empty file", () => {
    expect(parseCurveCsv("", "t")).toEqual({ ok: false, issues: [{ message: "The file is empty." }] });
  });
});

describe("validateCurve", () => {
  it("flags unsorted calendar ages in a constructed curve", () => {
    const c: Curve = {
      name: "t",
      calBp: Float64Array.from([0, 20, 10]),
      c14: Float64Array.from([1, 2, 3]),
      sigma: Float64Array.from([1, 1, 1]),
    };
    expect(validateCurve(c).map((i) => i.message)).toEqual(["Calendar ages are not ascending at 10 cal BP."]);
  });
});

describe("the published curve files", () => {
  it("IntCal20 imports with its spot values (curves/README.md)", () => {
    const c = loadCurve("intcal20");
    expect(c.calBp.length).toBe(9501);
    expect(c.calBp[0]).toBe(0);
    expect(c.calBp[c.calBp.length - 1]).toBe(55000);
    // Reimer et al. 2020 via curves/README.md [published]
    expect(checkSpotValues(c, "intcal20")).toEqual([]);
  });

  it("Marine20 imports with its spot values (curves/README.md)", () => {
    const c = loadCurve("marine20");
    expect(c.calBp.length).toBe(5501);
    // Heaton et al. 2020 via curves/README.md [published]
    expect(checkSpotValues(c, "marine20")).toEqual([]);
  });

  it("spot-value check fails on a curve that does not match", () => {
    const c = loadCurve("intcal20");
    const shifted: Curve = { ...c, c14: c.c14.map((v) => v + 1) };
    expect(checkSpotValues(shifted, "intcal20")).toHaveLength(SPOT_VALUES.intcal20.length);
    expect(checkSpotValues(c, "marine20").length).toBeGreaterThan(0);
  });

  it("keeps the AD 774/775 step rows (A4)", () => {
    const c = loadCurve("intcal20");
    // Reimer et al. 2020, CHECK_VALUES A4 [published]: 1179 → 1299, 1173 → 1166
    expect(c.c14[findRow(c, 1179)]).toBe(1299);
    expect(c.c14[findRow(c, 1173)]).toBe(1166);
    const p = prepareCurve(c);
    expect(preparedCurveAt(p, 1179)?.c14).toBe(1299);
    expect(preparedCurveAt(p, 1173)?.c14).toBe(1166);
  });
});

describe("interpolation and the prepared grid", () => {
  const c: Curve = {
    name: "t",
    calBp: Float64Array.from([0, 10, 30]),
    c14: Float64Array.from([100, 200, 100]),
    sigma: Float64Array.from([10, 20, 40]),
  };

  it("interpolates the curve and its σ linearly between rows", () => {
    expect(interpolateCurve(c, 5)).toEqual({ c14: 150, sigma: 15 });
    expect(interpolateCurve(c, 20)).toEqual({ c14: 150, sigma: 30 });
    expect(interpolateCurve(c, 30)).toEqual({ c14: 100, sigma: 40 });
    expect(interpolateCurve(c, 31)).toBeNull();
  });

  it("fills every calendar year and indexes blocks", () => {
    const p = prepareCurve(c, { blockSize: 8 });
    expect(p.startCalBp).toBe(0);
    expect(p.length).toBe(31);
    for (let g = 0; g <= 30; g++) {
      const ref = interpolateCurve(c, g)!;
      expect(p.c[g]).toBeCloseTo(ref.c14, 10);
      expect(Math.sqrt(p.s2[g])).toBeCloseTo(ref.sigma, 10);
    }
    expect(p.blockMinC.length).toBe(4);
    expect(p.blockMaxC[1]).toBe(200);
    expect(p.blockMinC[0]).toBe(100);
    expect(p.blockMaxS2[3]).toBeCloseTo(40 * 40, 10);
    expect(p.minC14).toBe(100);
    expect(p.maxC14).toBe(200);
  });

  it("applies ΔR to the curve with errors in quadrature (A5, common practice)", () => {
    const p = prepareCurve(c);
    const v = preparedCurveAt(p, 10, { deltaR: 50, deltaRError: 15 })!;
    expect(v.c14).toBe(250);
    expect(v.sigma).toBeCloseTo(25, 12);
  });
});

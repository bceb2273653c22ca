import { describe, expect, it } from "vitest";
import fc from "fast-check";
import {
  altitudeLatitudeParameters,
  cosmicAtDepth,
  cosmicDoseRate,
  cosmicDoseRateSlope,
  cosmicScaleFactor,
  geomagneticLatitude,
  overburden,
} from "#app/science/cosmic.ts";
import { expectQuoted } from "./check.ts";

const none = { depthError: 0, densityError: 0 };

describe("cosmic dose rate at sea level, 55° (B4)", () => {
  it("matches the derived values", () => {
    // Prescott & Hutton 1994 — from memory [derived]: x = 2 → 0.1826; 5 → 0.1491; 10 → 0.1090 Gy/ka
    expectQuoted(cosmicDoseRate(2), 0.1826, 4);
    expectQuoted(cosmicDoseRate(5), 0.1491, 4);
    expectQuoted(cosmicDoseRate(10), 0.109, 4);
  });

  it("takes the overburden in hg/cm² as depth (m) × density (g/cm³)", () => {
    // 1 m at 2 g/cm³ = 200 g/cm² = 2 hg/cm²
    expect(overburden(1, 2)).toBe(2);
    expectQuoted(cosmicAtDepth({ depthM: 1, density: 2, ...none }).doseRate, 0.1826, 4);
  });

  it("its analytic slope agrees with a finite difference and is negative", () => {
    fc.assert(
      fc.property(fc.double({ min: 0.5, max: 100, noNaN: true }), (x) => {
        const h = 1e-5;
        const fd = (cosmicDoseRate(x + h) - cosmicDoseRate(x - h)) / (2 * h);
        expect(cosmicDoseRateSlope(x)).toBeCloseTo(fd, 8);
        expect(cosmicDoseRateSlope(x)).toBeLessThan(0);
      }),
    );
  });

  it("returns the shallow-burial caution below 1.67 hg/cm²", () => {
    // Prescott & Hutton 1994 — from memory: valid above 1.67 hg/cm²
    const shallow = cosmicAtDepth({ depthM: 0.5, density: 1.8, ...none });
    expect(shallow.withinValidity).toBe(false);
    expect(shallow.caution).toMatch(/below 1.67 hg\/cm²/);
    expect(cosmicAtDepth({ depthM: 1, density: 1.8, ...none }).caution).toBeUndefined();
  });

  it("error: the formula allowance and the depth and density errors, in quadrature", () => {
    // common practice: 10 % allowance; depth and density through dD/dx (finite difference, independent)
    const c = cosmicAtDepth({ depthM: 3, depthError: 0.2, density: 1.9, densityError: 0.1 });
    const h = 1e-5;
    const slope = (cosmicDoseRate(5.7 + h) - cosmicDoseRate(5.7 - h)) / (2 * h);
    const expected = Math.hypot(slope * 1.9 * 0.2, slope * 3 * 0.1, 0.1 * cosmicDoseRate(5.7));
    expect(c.error).toBeCloseTo(expected, 9);
    expect(cosmicAtDepth({ depthM: 3, density: 1.9, ...none }).error).toBeCloseTo(0.1 * cosmicDoseRate(5.7), 12);
  });
});

describe("altitude and geomagnetic latitude (Prescott & Hutton 1994, Fig. 2; values from memory)", () => {
  it("is about 1 at sea level and 55°, where the formula is defined", () => {
    // Prescott & Hutton 1994, from memory: D0 is given for 55° at sea level, so F + J ≈ 1 there
    expect(Math.abs(cosmicScaleFactor(55, 0) - 1)).toBeLessThan(0.01);
  });

  it("is lower towards the geomagnetic equator and higher with altitude", () => {
    // Prescott & Hutton 1994, from memory: about 10 % less at the equator at sea level
    expect(cosmicScaleFactor(0, 0)).toBeCloseTo(0.9165, 3);
    expect(cosmicScaleFactor(0, 0)).toBeLessThan(cosmicScaleFactor(55, 0));
    // From memory: the cosmic dose rate roughly doubles within the first ~3 km at high latitude.
    const at3km = cosmicScaleFactor(60, 3);
    expect(at3km).toBeGreaterThan(1.8);
    expect(at3km).toBeLessThan(2.2);
    const p = altitudeLatitudeParameters(60);
    expect(p.H).toBeGreaterThan(4);
    expect(p.H).toBeLessThan(4.2);
  });

  it("geomagnetic latitude: 90° at the dipole pole, and about 68° in northern Labrador", () => {
    // centred dipole with its pole at 78.5° N, 291° E (from memory); spherical trigonometry [derived]
    expect(geomagneticLatitude(78.5, 291)).toBeCloseTo(90, 6);
    expect(geomagneticLatitude(-78.5, 111)).toBeCloseTo(-90, 6);
    const lab = geomagneticLatitude(58.5, -64);
    expect(lab).toBeGreaterThan(66);
    expect(lab).toBeLessThan(70);
  });

  it("the site scaling multiplies the dose rate and its slope alike", () => {
    const site = { latitude: 58.5, longitude: -64, elevationM: 400 };
    const here = cosmicAtDepth({ depthM: 2, depthError: 0.1, density: 1.8, densityError: 0.1, site });
    const sea = cosmicAtDepth({ depthM: 2, depthError: 0.1, density: 1.8, densityError: 0.1 });
    expect(here.scale).toBeGreaterThan(1);
    expect(here.doseRate / sea.doseRate).toBeCloseTo(here.scale, 12);
    expect(here.dDepth / sea.dDepth).toBeCloseTo(here.scale, 12);
    expect(here.geomagneticLatitude).not.toBeNull();
  });
});

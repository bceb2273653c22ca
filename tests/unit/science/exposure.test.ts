import { describe, expect, it } from "vitest";
import fc from "fast-check";
import { BE10_DECAY_CONSTANT, exposureAge, nuclideConcentration } from "#app/science/exposure.ts";
import { expectQuoted } from "./check.ts";

describe("simple exposure age (C)", () => {
  it("decay constant from the 1.387 Ma half-life", () => {
    // Chmeleff et al. 2010; Korschinek et al. 2010 (CHECK_VALUES C): λ = 4.9975e−7 /yr
    expectQuoted(BE10_DECAY_CONSTANT * 1e7, 4.9975, 4);
  });

  it("concentration after 15,000 years at P = 4.0", () => {
    // Lal 1991 [derived, P = 4.0 atoms/g/yr]: t = 15,000 yr → N = 59,776 atoms/g
    expectQuoted(nuclideConcentration(4.0, 15000), 59776, 0);
  });

  it("age inverts the concentration", () => {
    fc.assert(
      fc.property(fc.double({ min: 1, max: 2e6, noNaN: true }), fc.double({ min: 1, max: 50, noNaN: true }), (t, p) => {
        expect(exposureAge(nuclideConcentration(p, t), p) / t).toBeCloseTo(1, 6);
      }),
    );
    expect(exposureAge(4.0 / BE10_DECAY_CONSTANT, 4.0)).toBe(Number.POSITIVE_INFINITY);
  });
});

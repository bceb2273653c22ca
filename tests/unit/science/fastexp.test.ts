import { describe, expect, it } from "vitest";
import fc from "fast-check";
import { expNonPositive } from "#app/science/fastexp.ts";

describe("expNonPositive", () => {
  it("agrees with Math.exp to 3e-9 relative on [−40, 0]", () => {
    fc.assert(
      fc.property(fc.double({ min: -40, max: 0, noNaN: true }), (x) => {
        expect(Math.abs(expNonPositive(x) / Math.exp(x) - 1)).toBeLessThan(3e-9);
      }),
      { numRuns: 5000 },
    );
    for (const x of [0, -1 / 64, -0.5, -18, -39.999]) expect(Math.abs(expNonPositive(x) / Math.exp(x) - 1)).toBeLessThan(3e-9);
  });

  it("returns 0 below −40", () => {
    expect(expNonPositive(-40.01)).toBe(0);
    expect(expNonPositive(-1e9)).toBe(0);
  });
});

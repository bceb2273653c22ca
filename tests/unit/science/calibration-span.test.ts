import { describe, expect, it } from "vitest";
import { calibrate, calibrationSpan } from "#app/science/calibration.ts";
import { prepareCurve, type Curve } from "#app/science/curve.ts";
import { loadCurve } from "./curve-files.ts";

// calibrationSpan is the work measure of the public calibration API: the calendar years the
// likelihood is computed over. Checked against the curve itself (common practice: a straight
// synthetic curve, where the answer is known) and against what calibrate() returns.

function straightCurve(n: number): Curve {
  const calBp = new Float64Array(n);
  const c14 = new Float64Array(n);
  const sigma = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    calBp[i] = i;
    c14[i] = i;
  }
  return { name: "straight", calBp, c14, sigma };
}

const straight = prepareCurve(straightCurve(30001));
const intcal = prepareCurve(loadCurve("intcal20"));

describe("calibrationSpan", () => {
  it("on a straight curve covers ±6σ around the age, rounded out to whole blocks", () => {
    for (const [age, error] of [
      [10_000, 50],
      [15_000, 500],
      [20_000, 1_000],
    ] as const) {
      const span = calibrationSpan(straight, { age, error });
      expect(span).toBeGreaterThanOrEqual(12 * error);
      expect(span).toBeLessThanOrEqual(12 * error + 2 * straight.blockSize);
    }
  });

  it("grows with the error and holds the whole calibrated density", () => {
    let previous = 0;
    for (const error of [30, 100, 500, 2_000]) {
      const input = { age: 10_250, error };
      const span = calibrationSpan(intcal, input);
      expect(span).toBeGreaterThan(previous);
      previous = span;
      const { density } = calibrate(intcal, input);
      expect(density.values.length).toBeLessThanOrEqual(span);
    }
    // ΔR's error widens it like the age's own.
    expect(calibrationSpan(intcal, { age: 10_250, error: 30, deltaRError: 500 })).toBe(
      calibrationSpan(intcal, { age: 10_250, error: Math.hypot(30, 500) }),
    );
  });

  it("is the whole curve at most, and 0 for what calibrate refuses", () => {
    expect(calibrationSpan(intcal, { age: 20_000, error: 50_000 })).toBe(intcal.length);
    expect(calibrationSpan(intcal, { age: 90_000, error: 50 })).toBe(0);
    expect(() => calibrate(intcal, { age: 90_000, error: 50 })).toThrow(/beyond the curve/);
    expect(calibrationSpan(intcal, { age: 10_000, error: -1 })).toBe(0);
    expect(calibrationSpan(intcal, { age: Number.NaN, error: 30 })).toBe(0);
  });
});

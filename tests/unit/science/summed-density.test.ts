import { describe, expect, test } from "vitest";
import { normalDensity } from "#app/science/density.ts";
import { GRADE_KEYS, sumDensities } from "#app/science/summed-density.ts";

const sum = (xs: number[]) => xs.reduce((a, b) => a + b, 0);

describe("sumDensities", () => {
  const a = { density: normalDensity(10_000, 50), grade: 3 };
  const b = { density: normalDensity(11_000, 100), grade: null };
  const c = { density: normalDensity(10_500, 80), grade: 1 };

  test("the summed density sums to the number of determinations, and the grades add up to the total", () => {
    const s = sumDensities([a, b, c], { step: 10 });
    expect(s.count).toBe(3);
    expect(sum(s.total)).toBeCloseTo(3, 4);
    expect(sum(s.byGrade["3"])).toBeCloseTo(1, 4);
    expect(sum(s.byGrade.ungraded)).toBeCloseTo(1, 4);
    expect(sum(s.byGrade["2"])).toBe(0);
    expect(s.countByGrade).toEqual({ "3": 1, "2": 0, "1": 1, "0": 0, ungraded: 1 });
    for (let k = 0; k < s.total.length; k++) {
      expect(sum(GRADE_KEYS.map((g) => s.byGrade[g][k]))).toBeCloseTo(s.total[k], 9);
    }
  });

  test("a bin holds the probability mass of the years it covers (standard normal table)", () => {
    // N(10000, 50) on a 1-year grid, bin [10000, 10100): Φ(99.5/50) − Φ(−0.5/50) = Φ(1.99) − Φ(−0.01)
    // = 0.9767 − 0.4960 = 0.4807 (standard normal table, four decimals).
    const s = sumDensities([a], { step: 100 });
    expect(s.startCalBp % 100).toBe(0);
    const k = (10_000 - s.startCalBp) / 100;
    expect(s.total[k]).toBeCloseTo(0.4807, 3);
  });

  test("normalised, the bins sum to 1; a window leaves out the mass outside it", () => {
    expect(sum(sumDensities([a, b, c], { normalise: true }).total)).toBeCloseTo(1, 4);
    // Only N(10000, 50) lies inside 9500–10300; N(10500, 80) reaches it only beyond 2.5 σ, N(11000, 100) not at all.
    const w = sumDensities([a, b, c], { step: 1, range: [10_300, 9_500] });
    expect(w.startCalBp).toBe(9_500);
    expect(w.total.length).toBe(801);
    expect(sum(w.total)).toBeGreaterThan(1.0);
    expect(sum(w.total)).toBeLessThan(1.01);
  });

  test("no densities: an empty sum", () => {
    const s = sumDensities([]);
    expect(s.count).toBe(0);
    expect(s.total).toEqual([]);
  });

  test("rejects a bin width that is not a whole number of years", () => {
    expect(() => sumDensities([a], { step: 0.5 })).toThrow(/whole number/);
  });
});

import { describe, expect, it } from "vitest";
import { formatCount, formatPlain, formatWithError } from "#app/utils/age-format.ts";

// Rounding convention: the error to two significant figures and the value to the same decimal
// place (common practice in reporting measurements). One rule for every page: science/precision.ts.
describe("honest precision", () => {
  it("rounds a value to its error's second significant figure", () => {
    expect(formatWithError(2.06931, 0.017401, "Gy/ka")).toBe("2.069 ± 0.017 Gy/ka");
    expect(formatWithError(10250.4, 45.2, "¹⁴C yr BP")).toBe("10,250 ± 45 ¹⁴C yr BP");
    expect(formatWithError(12.3456, 0.876)).toBe("12.35 ± 0.88");
    expect(formatWithError(1234.5678, 1.2)).toBe("1,234.6 ± 1.2");
    // An error of hundreds rounds the value to tens (it kept every unit before: "12,346 ± 568").
    expect(formatWithError(12345.6, 567.8, "yr")).toBe("12,350 ± 570 yr");
  });

  it("falls back to three significant figures without an error, adding no zeros", () => {
    expect(formatWithError(2.06931, null)).toBe("2.07");
    expect(formatWithError(2.06931, 0)).toBe("2.07");
    expect(formatWithError(12345.6, null)).toBe("12,346");
    expect(formatWithError(-50, null)).toBe("−50");
    expect(formatWithError(2.5, null)).toBe("2.5");
    expect(formatWithError(0, null)).toBe("0");
  });

  it("writes lone values at four significant figures and counts with separators", () => {
    expect(formatPlain(0.017401)).toBe("0.0174");
    expect(formatPlain(12345.6, "cal BP")).toBe("12,346 cal BP");
    expect(formatPlain(null)).toBe("—");
    expect(formatCount(3042)).toBe("3,042");
    expect(formatCount(5500000)).toBe("5,500,000");
  });
});

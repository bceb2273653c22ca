import { describe, expect, it } from "vitest";
import { decimalsForError, formatCount, formatPlain, formatValueError } from "#app/utils/age-format.ts";

// Rounding convention: the error to two significant figures and the value to the same decimal
// place (common practice in reporting measurements).
describe("honest precision", () => {
  it("rounds a value to its error's second significant figure", () => {
    expect(formatValueError(2.06931, 0.017401, "Gy/ka")).toBe("2.069 ± 0.017 Gy/ka");
    expect(formatValueError(10250.4, 45.2, "¹⁴C yr BP")).toBe("10,250 ± 45 ¹⁴C yr BP");
    expect(formatValueError(12.3456, 0.876)).toBe("12.35 ± 0.88");
    expect(formatValueError(1234.5678, 1.2)).toBe("1,234.6 ± 1.2");
  });

  it("falls back to the plain value without an error", () => {
    expect(formatValueError(2.06931, null)).toBe("2.069");
    expect(formatValueError(2.06931, 0)).toBe("2.069");
  });

  it("keeps decimals in a sane range", () => {
    expect(decimalsForError(45)).toBe(0);
    expect(decimalsForError(450)).toBe(0);
    expect(decimalsForError(0.5)).toBe(2);
    expect(decimalsForError(1e-12)).toBe(6);
    expect(decimalsForError(Number.NaN)).toBe(0);
  });

  it("writes lone values at four significant figures and counts with separators", () => {
    expect(formatPlain(0.017401)).toBe("0.0174");
    expect(formatPlain(12345.6, "cal BP")).toBe("12,346 cal BP");
    expect(formatPlain(null)).toBe("—");
    expect(formatCount(3042)).toBe("3,042");
    expect(formatCount(5500000)).toBe("5,500,000");
  });
});

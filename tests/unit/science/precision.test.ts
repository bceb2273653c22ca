import { describe, expect, it } from "vitest";
import { decimalsForError, formatWithError } from "#app/science/precision.ts";

describe("honest precision (common practice: the error to two significant digits)", () => {
  it("rounds the value to the error's last digit", () => {
    expect(formatWithError(2.0713, 0.1142, "Gy/ka")).toBe("2.07 ± 0.11 Gy/ka");
    expect(formatWithError(12.3456, 0.876, "ka")).toBe("12.35 ± 0.88 ka");
    expect(formatWithError(12345.6, 567.8, "yr")).toBe("12,350 ± 570 yr");
    expect(formatWithError(0.18264, 0.018264, "Gy/ka")).toBe("0.183 ± 0.018 Gy/ka");
  });

  it("carries a rounding that gains a digit", () => {
    // 0.0996 rounds to 0.10, so two significant digits are 0.10, not 0.100
    expect(decimalsForError(0.0996)).toBe(2);
    expect(formatWithError(1.23456, 0.0996)).toBe("1.23 ± 0.10");
  });

  it("without an error shows three significant digits", () => {
    expect(formatWithError(2.07134, null, "Gy/ka")).toBe("2.07 Gy/ka");
    expect(formatWithError(-0.5, 0.12)).toBe("−0.50 ± 0.12");
  });
});

import { describe, expect, it } from "vitest";
import { formatCalRange, formatMeasuredAge, luminescenceKa } from "#app/utils/age-format.ts";
import { exploreSearch } from "#app/utils/explore-filters.ts";

const none = {
  c14AgeYr: null,
  c14ErrorYr: null,
  isLimit: false,
  deGy: null,
  deErrorGy: null,
  doseRateGyPerKa: null,
  doseRateErrorGyPerKa: null,
};

describe("formatMeasuredAge", () => {
  it("writes radiocarbon ages with grouped thousands and the ¹⁴C yr BP unit", () => {
    expect(formatMeasuredAge({ ...none, method: "radiocarbon", c14AgeYr: 10250.4, c14ErrorYr: 45 })).toBe(
      "10,250 ± 45 ¹⁴C yr BP",
    );
  });

  it("writes greater-than ages as limits", () => {
    expect(formatMeasuredAge({ ...none, method: "radiocarbon", c14AgeYr: 45000, isLimit: true })).toBe("> 45,000 ¹⁴C yr BP");
  });

  it("derives the age from F¹⁴C when only that was given", () => {
    // -8033 ln(0.5) = 5568
    expect(formatMeasuredAge({ ...none, method: "radiocarbon", f14c: 0.5, f14cError: 0.002 })).toBe("5,568 ± 32 ¹⁴C yr BP");
  });

  it("writes luminescence ages in ka from De / dose rate with errors in quadrature", () => {
    const d = { ...none, method: "luminescence", deGy: 24.6, deErrorGy: 1.2, doseRateGyPerKa: 2, doseRateErrorGyPerKa: 0.1 };
    expect(formatMeasuredAge(d)).toBe("12.30 ± 0.86 ka");
    expect(luminescenceKa(d)!.errorKa).toBeCloseTo(12.3 * Math.hypot(1.2 / 24.6, 0.1 / 2), 10);
  });

  it("shows an em dash when nothing was measured", () => {
    expect(formatMeasuredAge({ ...none, method: "luminescence" })).toBe("—");
  });
});

describe("formatCalRange", () => {
  it("puts the older bound first whichever way it is stored", () => {
    expect(formatCalRange(11350, 11060)).toBe("11,350–11,060");
    expect(formatCalRange(11060, 11350)).toBe("11,350–11,060");
    expect(formatCalRange(null, 3)).toBe("");
  });
});

describe("exploreSearch", () => {
  it("leaves defaults out of shared links", () => {
    expect(exploreSearch({ sort: "created", page: 1, q: "fjord", method: undefined })).toBe("?q=fjord");
    expect(exploreSearch({ sort: "cal", page: 1 }, { page: 3 })).toBe("?sort=cal&page=3");
  });
});

// Checks of one determination on its own: value range, marine caveats, duplicates.
import { describe, expect, it } from "vitest";
import { checkValueRange } from "#app/science/checks/value-range.ts";
import { checkMarine } from "#app/science/checks/marine.ts";
import { buildDuplicateIndex, checkDuplicates, normaliseLabCode } from "#app/science/checks/duplicates.ts";
import { item } from "./item.ts";

describe("value range", () => {
  it("passes an ordinary radiocarbon age", () => {
    expect(checkValueRange(item()).severity).toBe("pass");
  });

  it("notes a greater-than age as a limit", () => {
    const r = checkValueRange(item({ isLimit: true, c14AgeYr: 47814, calendar: null }));
    expect(r.severity).toBe("note");
    expect(r.message).toContain("47,814");
  });

  it("warns on a post-bomb result and suggests young carbon", () => {
    // pMC 110 → F14C 1.10 → −765.6 yr (CHECK_VALUES A1, derived from Stuiver & Polach 1977)
    const r = checkValueRange(item({ f14c: 1.1, c14AgeYr: -766, calendar: null }));
    expect(r.severity).toBe("warning");
    expect(r.suggestedFlag).toBe("young_carbon");
  });

  it("warns on an age beyond the curve, quoting the calibration's reason", () => {
    const reason = "60,000 14C yr BP is beyond the curve: intcal20 covers …";
    const r = checkValueRange(item({ c14AgeYr: 60000, calendar: null, calibrationError: reason }));
    expect(r.severity).toBe("warning");
    expect(r.message).toBe(reason);
  });

  it("warns on an error too small and notes one too large", () => {
    // 15 yr floor and 10 % ceiling: common practice
    expect(checkValueRange(item({ c14ErrorYr: 10 })).severity).toBe("warning");
    const big = checkValueRange(item({ c14AgeYr: 30000, c14ErrorYr: 4000 }));
    expect(big.severity).toBe("note");
    expect(big.message).toContain("13 %");
  });

  it("passes a luminescence age of 20.0 ± 1.28 ka", () => {
    // 50 Gy ± 5 % / 2.5 Gy/ka ± 4 % → 20.0 ka ± 6.40 % (CHECK_VALUES B1, Aitken 1985, from memory)
    const r = checkValueRange(
      item({
        method: "luminescence",
        deGy: 50,
        deErrorGy: 2.5,
        doseRateGyPerKa: 2.5,
        doseRateErrorGyPerKa: 0.1,
        measurementYear: 2015,
      }),
    );
    expect(r.severity).toBe("pass");
    expect(r.details.ageKa).toBeCloseTo(20, 9);
    expect(r.details.errorKa as number).toBeCloseTo(1.2806, 3);
  });

  it("warns on a dose-rate error below 3 %", () => {
    // below about 3 % is implausible for field samples (CHECK_VALUES B7, common practice)
    const r = checkValueRange(
      item({
        method: "luminescence",
        deGy: 50,
        deErrorGy: 2.5,
        doseRateGyPerKa: 2.5,
        doseRateErrorGyPerKa: 0.05,
        measurementYear: 2015,
      }),
    );
    expect(r.severity).toBe("warning");
    expect(r.suggestedFlag).toBe("dose_rate_uncertain");
  });

  // The stored dose-rate inputs are read as the form reads them (app/science/dose-rate-fields.ts).
  const computed = {
    method: "luminescence" as const,
    deGy: 50,
    deErrorGy: 2.5,
    doseRateGyPerKa: 2.5,
    doseRateErrorGyPerKa: 0.1,
    measurementYear: 2015,
  };
  const inputs = { kPercent: 1.5, uPpm: 2, thPpm: 8, waterContentFraction: 0.15, burialDepthM: 1.2, densityGPerCm3: 1.9 };

  it("warns when a fine-grain row has no a-value, naming it and suggesting the dose-rate flag", () => {
    const r = checkValueRange(item({ ...computed, doseRateFields: { ...inputs, grainSizeUm: 8 } }));
    expect(r.severity).toBe("warning");
    expect(r.message).toContain("Fine grains need an a-value");
    expect(r.suggestedFlag).toBe("dose_rate_uncertain");
    expect(r.details.doseRateInputIssues).toEqual([expect.objectContaining({ field: "a_value" })]);
  });

  it("notes the published internal K assumed for a K-feldspar row, and passes a complete quartz row", () => {
    const feldspar = checkValueRange(
      item({ ...computed, doseRateFields: { ...inputs, grainSizeUm: 200, signal: "pIRIR", mineral: "K-feldspar" } }),
    );
    expect(feldspar.severity).toBe("note");
    // Huntley & Baril 1997: 12.5 ± 0.5 % internal K (CHECK_VALUES, from memory)
    expect(feldspar.message).toContain("12.5 ± 0.5 %");
    expect(feldspar.suggestedFlag).toBeNull();
    const quartz = checkValueRange(item({ ...computed, doseRateFields: { ...inputs, grainSizeUm: 200, mineral: "quartz" } }));
    expect(quartz.severity).toBe("pass");
  });
});

describe("marine caveats", () => {
  const shell = {
    material: "marine shell",
    marineMaterial: true,
    curveName: "marine20",
    deltaRYr: 15,
    deltaRErrorYr: 45,
    deltaRCurve: "marine20",
  };

  it("passes a shell with a Marine20 ΔR in the Holocene", () => {
    expect(checkMarine(item({ ...shell, age: [9000, 80] })).severity).toBe("pass");
  });

  it("warns on marine material on the atmospheric curve", () => {
    const r = checkMarine(item({ ...shell, curveName: "intcal20" }));
    expect(r.severity).toBe("warning");
    expect(r.suggestedFlag).toBe("reservoir_uncertain");
  });

  it("warns on a missing ΔR, on a ΔR without its curve and on one from an older curve", () => {
    expect(checkMarine(item({ ...shell, deltaRYr: null, deltaRErrorYr: null, deltaRCurve: null })).severity).toBe("warning");
    expect(checkMarine(item({ ...shell, deltaRCurve: null })).message).toContain("without the curve");
    // values from older curves shift by about −140 yr for Marine20 (CHECK_VALUES A5, Pieńkowski et al. 2022, from memory)
    const older = checkMarine(item({ ...shell, deltaRYr: 220, deltaRCurve: "marine13" }));
    expect(older.severity).toBe("warning");
    expect(older.message).toContain("marine13");
  });

  it("notes Marine20 poleward of 40° before the Holocene", () => {
    // Heaton et al. 2020, 2023: great caution outside 40°S–40°N in glacial periods (CHECK_VALUES A5)
    const r = checkMarine(item({ ...shell, latitude: 58.2, age: [12500, 100] }));
    expect(r.severity).toBe("note");
    expect(checkMarine(item({ ...shell, latitude: 35, age: [12500, 100] })).severity).toBe("pass");
  });

  it("warns on a southern-hemisphere site calibrated on IntCal20, in words", () => {
    const r = checkMarine(item({ latitude: -45.2, curveName: "intcal20" }));
    expect(r.severity).toBe("warning");
    expect(r.message).toMatch(/southern hemisphere \(latitude 45\.20° S\).*IntCal20 \(2020\), a northern-hemisphere curve/);
  });

  it("leaves terrestrial and luminescence dates alone", () => {
    expect(checkMarine(item()).severity).toBe("pass");
    expect(checkMarine(item({ method: "luminescence" })).severity).toBe("pass");
  });
});

describe("duplicates", () => {
  it("normalises case, separators and leading zeros of lab codes", () => {
    expect(normaliseLabCode("kvx 01234")).toBe("KVX1234");
    expect(normaliseLabCode("KVX-1234")).toBe("KVX1234");
    expect(normaliseLabCode("KVX_1234")).toBe("KVX1234");
    expect(normaliseLabCode("KVX-1234a")).not.toBe(normaliseLabCode("KVX-1234"));
  });

  it("reports the same code written another way as a conflict", () => {
    const a = item({ labCode: "KVX-1234" });
    const b = item({ labCode: "kvx 01234", latitude: 60 });
    const r = checkDuplicates(b, buildDuplicateIndex([a, b], [a, b]));
    expect(r.severity).toBe("conflict");
    expect(r.details.labCodes).toEqual(["KVX-1234"]);
  });

  it("warns on a near-copy at the same place and passes a different age", () => {
    const a = item({ labCode: "KVX-1", c14AgeYr: 9120, c14ErrorYr: 35 });
    const b = item({ labCode: "ORZ-9", c14AgeYr: 9120, c14ErrorYr: 35, latitude: 57.001 });
    const c = item({ labCode: "ORZ-10", c14AgeYr: 9125, c14ErrorYr: 35 });
    const index = buildDuplicateIndex([a, b, c], [a, b, c]);
    expect(checkDuplicates(b, index).severity).toBe("warning");
    expect(checkDuplicates(c, index).severity).toBe("pass");
    const far = item({ labCode: "ORZ-11", c14AgeYr: 9120, c14ErrorYr: 35, latitude: 58 });
    expect(checkDuplicates(far, buildDuplicateIndex([a, far], [a, far])).severity).toBe("pass");
  });
});

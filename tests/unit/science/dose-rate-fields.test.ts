import { describe, expect, it } from "vitest";
import {
  doseRateFieldIssues,
  doseRateFromFields,
  grainKindOf,
  mineralOf,
  type DoseRateFields,
} from "#app/science/dose-rate-fields.ts";
import { fullDoseRate } from "#app/science/dose-rate.ts";

const row: DoseRateFields = {
  signal: "OSL",
  mineral: "quartz",
  kPercent: 1.6,
  uPpm: 1.2,
  thPpm: 4.5,
  waterContentFraction: 0.15,
  grainSizeUm: 180,
  burialDepthM: 1.5,
  densityGPerCm3: 1.8,
};

describe("reading a row's dose-rate fields", () => {
  it("recognises mineral and grain use", () => {
    expect(mineralOf({ mineral: "K-feldspar" })).toBe("k-feldspar");
    expect(mineralOf({ mineral: "polymineral fine grains" })).toBe("polymineral");
    expect(mineralOf({ mineral: null, signal: "pIRIR" })).toBe("k-feldspar");
    expect(mineralOf({ mineral: "Quartz" })).toBe("quartz");
    expect(grainKindOf({ grainSizeUm: 8 })).toBe("fine");
    expect(grainKindOf({ grainSizeUm: 180 })).toBe("coarse");
    expect(grainKindOf({ grainSizeUm: 180, grainUse: "fine" })).toBe("fine");
  });

  it("warns at the field when a fine-grain or feldspar row lacks what it needs", () => {
    const fine = doseRateFieldIssues({ ...row, grainSizeUm: 8 });
    expect(fine).toContainEqual({ field: "a_value", message: expect.stringMatching(/a-value/) });
    const fs = doseRateFieldIssues({ ...row, signal: "pIRIR", mineral: "K-feldspar" });
    expect(fs).toContainEqual({ field: "internal_k_percent", message: expect.stringMatching(/12.5 ± 0.5 %/) });
    expect(doseRateFieldIssues({ ...row, signal: "IRSL" })).toContainEqual({
      field: "mineral",
      message: expect.stringMatching(/reads feldspar/),
    });
    expect(doseRateFieldIssues(row)).toEqual([]);
    expect(doseRateFieldIssues({ ...row, grainSizeUm: 8, aValue: 0.08 }).some((i) => i.field === "a_value")).toBe(false);
  });

  it("computes the same dose rate as the model, with coarse quartz's etch assumed and said", () => {
    const r = doseRateFromFields(row);
    expect(r?.ok).toBe(true);
    if (!r?.ok) return;
    const direct = fullDoseRate({
      k: { value: 1.6 },
      u: { value: 1.2 },
      th: { value: 4.5 },
      water: { value: 0.15 },
      mineral: "quartz",
      grain: { kind: "coarse", diameterUm: 180, etchUm: 10 },
      depthM: { value: 1.5 },
      density: { value: 1.8 },
    });
    expect(r.result.total).toBeCloseTo(direct.total, 12);
    expect(r.result.totalError).toBeCloseTo(direct.totalError, 12);
    expect(r.assumedFields.join(" ")).toMatch(/etch of 10 µm/);
  });

  it("reports a fine-grain row without a-value at its field, and nothing without concentrations", () => {
    expect(doseRateFromFields({ ...row, grainSizeUm: 8 })).toEqual({
      ok: false,
      field: "a_value",
      message: expect.stringMatching(/a-value/),
    });
    expect(doseRateFromFields({ ...row, kPercent: null })).toBeNull();
    expect(doseRateFromFields({ ...row, burialDepthM: null })).toMatchObject({ ok: false, field: "burial_depth_m" });
    expect(doseRateFromFields({ ...row, burialDepthM: null, labCosmicGyPerKa: 0.15 })).toMatchObject({ ok: true });
  });
});

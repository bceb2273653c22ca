// The one reading of a luminescence row's dose-rate fields (form, upload, API, stored row and
// determination page all call it): which mineral and grain use they describe, what is missing
// for that kind of sample (a warning at the field), and the full dose rate they give.

import { fullDoseRate, DoseRateInputError, type DoseRateMineral, type FullDoseRate, type GrainKind } from "./dose-rate.ts";
import { isConversionFactorKey } from "./dose-rate-factors.ts";
import type { Given } from "./dose-rate-inputs.ts";

export interface DoseRateFields {
  signal?: string | null;
  mineral?: string | null;
  kPercent?: number | null;
  kErrorPercent?: number | null;
  uPpm?: number | null;
  uErrorPpm?: number | null;
  thPpm?: number | null;
  thErrorPpm?: number | null;
  rbPpm?: number | null;
  rbErrorPpm?: number | null;
  waterContentFraction?: number | null;
  waterContentError?: number | null;
  grainSizeUm?: number | null;
  /** "coarse" or "fine"; absent → fine below 20 µm, coarse otherwise. */
  grainUse?: string | null;
  etchDepthUm?: number | null;
  aValue?: number | null;
  aValueError?: number | null;
  internalKPercent?: number | null;
  internalKErrorPercent?: number | null;
  internalRbPpm?: number | null;
  internalRbErrorPpm?: number | null;
  burialDepthM?: number | null;
  burialDepthErrorM?: number | null;
  densityGPerCm3?: number | null;
  densityErrorGPerCm3?: number | null;
  labCosmicGyPerKa?: number | null;
  labCosmicErrorGyPerKa?: number | null;
  conversionFactors?: string | null;
  site?: { latitude: number; longitude: number; elevationM: number | null } | null;
}

/** Field names as the row schema spells them, so warnings land on the right input. */
export type DoseRateField =
  | "mineral"
  | "grain_size_um"
  | "a_value"
  | "internal_k_percent"
  | "burial_depth_m"
  | "density_g_cm3"
  | "k_percent"
  | "u_ppm"
  | "th_ppm"
  | "water_content"
  | "rb_ppm";

export interface DoseRateFieldIssue {
  field: DoseRateField;
  message: string;
}

/** Mean grain size assumed when a coarse-grain row gives none, and the etch of coarse quartz. */
export const ASSUMED_COARSE_GRAIN_UM = 200;
export const ASSUMED_QUARTZ_ETCH_UM = 10;
export const ASSUMED_DENSITY = { value: 2.0, error: 0.2 };
const FINE_BELOW_UM = 20;

export function mineralOf(f: Pick<DoseRateFields, "mineral" | "signal">): DoseRateMineral {
  const m = (f.mineral ?? "").toLowerCase();
  if (/poly/.test(m)) return "polymineral";
  if (/feldspar|k-?fs|\bkf\b/.test(m)) return "k-feldspar";
  if (/quartz/.test(m)) return "quartz";
  // Infrared stimulation reads feldspar.
  return f.signal === "IRSL" || f.signal === "pIRIR" ? "k-feldspar" : "quartz";
}

export function grainKindOf(f: Pick<DoseRateFields, "grainUse" | "grainSizeUm">): GrainKind {
  if (f.grainUse === "fine" || f.grainUse === "coarse") return f.grainUse;
  return f.grainSizeUm != null && f.grainSizeUm < FINE_BELOW_UM ? "fine" : "coarse";
}

/** Whether the row gives what a computed dose rate needs (K, U, Th and water). */
export function hasConcentrations(f: DoseRateFields): boolean {
  return f.kPercent != null && f.uPpm != null && f.thPpm != null && f.waterContentFraction != null;
}

/**
 * Warnings at the field for a row whose dose rate is computed: a fine-grain row needs its
 * a-value; a feldspar (IRSL, pIRIR) row is told its internal K is the published value; grain
 * size, depth and density are said to be assumed when missing. Every problem at once.
 */
export function doseRateFieldIssues(f: DoseRateFields): DoseRateFieldIssue[] {
  if (!hasConcentrations(f)) return [];
  const issues: DoseRateFieldIssue[] = [];
  const mineral = mineralOf(f);
  const kind = grainKindOf(f);
  if (kind === "fine" && f.aValue == null) {
    issues.push({ field: "a_value", message: "Fine grains need an a-value (alpha efficiency) for their alpha dose." });
  }
  if (mineral === "k-feldspar" && f.internalKPercent == null) {
    issues.push({
      field: "internal_k_percent",
      message: "K-feldspar: no internal K given; 12.5 ± 0.5 % (Huntley & Baril 1997) is assumed for the internal dose rate.",
    });
  }
  if ((f.signal === "IRSL" || f.signal === "pIRIR") && f.mineral && mineral === "quartz") {
    issues.push({ field: "mineral", message: `${f.signal} reads feldspar, but the mineral is given as quartz.` });
  }
  if (f.grainSizeUm == null && f.grainUse !== "fine") {
    issues.push({
      field: "grain_size_um",
      message: `No grain size: ${ASSUMED_COARSE_GRAIN_UM} µm is assumed for the beta attenuation.`,
    });
  }
  if (f.labCosmicGyPerKa == null) {
    if (f.burialDepthM == null)
      issues.push({ field: "burial_depth_m", message: "No burial depth: the cosmic dose rate cannot be computed." });
    if (f.densityGPerCm3 == null) {
      issues.push({
        field: "density_g_cm3",
        message: `No density: ${ASSUMED_DENSITY.value} ± ${ASSUMED_DENSITY.error} g/cm³ is assumed for the cosmic dose rate.`,
      });
    }
  }
  return issues;
}

function given(value: number, error: number | null | undefined): Given {
  return { value, error: error ?? null };
}

export type FieldsDoseRate =
  { ok: true; result: FullDoseRate; assumedFields: string[] } | { ok: false; field: string; message: string };

/** The full dose rate of a row's fields, or why there is none; null when K, U, Th or water is missing. */
export function doseRateFromFields(f: DoseRateFields): FieldsDoseRate | null {
  if (!hasConcentrations(f)) return null;
  const kind = grainKindOf(f);
  const mineral = mineralOf(f);
  const assumedFields: string[] = [];
  let diameter = f.grainSizeUm ?? null;
  if (diameter == null) {
    diameter = kind === "fine" ? 8 : ASSUMED_COARSE_GRAIN_UM;
    assumedFields.push(`grain size ${diameter} µm (assumed)`);
  }
  let etch = f.etchDepthUm ?? null;
  if (etch == null && kind === "coarse" && mineral === "quartz") {
    etch = ASSUMED_QUARTZ_ETCH_UM;
    assumedFields.push(`HF etch of ${ASSUMED_QUARTZ_ETCH_UM} µm (assumed for coarse quartz)`);
  }
  if (etch != null && 2 * etch >= diameter) etch = 0;
  const density = f.densityGPerCm3 == null ? ASSUMED_DENSITY : { value: f.densityGPerCm3, error: f.densityErrorGPerCm3 ?? null };
  if (f.densityGPerCm3 == null && f.labCosmicGyPerKa == null)
    assumedFields.push(`density ${ASSUMED_DENSITY.value} ± ${ASSUMED_DENSITY.error} g/cm³ (assumed)`);
  if (f.labCosmicGyPerKa == null && f.burialDepthM == null) {
    return {
      ok: false,
      field: "burial_depth_m",
      message: "A burial depth (or the lab's cosmic dose rate) is needed for the cosmic dose rate.",
    };
  }
  try {
    const result = fullDoseRate({
      k: given(f.kPercent!, f.kErrorPercent),
      u: given(f.uPpm!, f.uErrorPpm),
      th: given(f.thPpm!, f.thErrorPpm),
      rb: f.rbPpm == null ? null : given(f.rbPpm, f.rbErrorPpm),
      water: given(f.waterContentFraction!, f.waterContentError),
      mineral,
      grain: { kind, diameterUm: diameter, etchUm: etch },
      aValue: f.aValue == null ? null : given(f.aValue, f.aValueError),
      internalK: f.internalKPercent == null ? null : given(f.internalKPercent, f.internalKErrorPercent),
      internalRb: f.internalRbPpm == null ? null : given(f.internalRbPpm, f.internalRbErrorPpm),
      depthM: given(f.burialDepthM ?? 0, f.burialDepthErrorM),
      density: { value: density.value, error: density.error },
      site: f.site ?? null,
      labCosmic: f.labCosmicGyPerKa == null ? null : given(f.labCosmicGyPerKa, f.labCosmicErrorGyPerKa),
      factors: isConversionFactorKey(f.conversionFactors) ? f.conversionFactors : undefined,
    });
    return { ok: true, result, assumedFields };
  } catch (e) {
    if (e instanceof DoseRateInputError) return { ok: false, field: e.field, message: e.message };
    throw e;
  }
}

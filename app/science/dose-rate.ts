// The environmental dose rate of a luminescence sample with every term and every error: beta
// (attenuated by grain size, etching, water), gamma, alpha for fine grains (a-value), Rb, the
// internal K and Rb of K-feldspar, and cosmic (scaled to the site). The error is propagated
// analytically through each input; the breakdown gives each source's share of the variance.

import { cosmicAtDepth, type CosmicResult } from "./cosmic.ts";
import {
  betaAbsorbedFraction,
  BETA_ABSORBED_FRACTION,
  CONVERSION_FACTORS,
  DEFAULT_CONVERSION_FACTORS,
  etchFactor,
  FELDSPAR_INTERNAL_K,
  FELDSPAR_INTERNAL_RB,
  RB_BETA_GY_PER_KA_PER_PPM,
  RB_PPM_PER_K_PERCENT,
  WATER_H,
  waterFactor,
  type ConversionFactorKey,
} from "./dose-rate-factors.ts";
import { ASSUMED_ERRORS, resolve, type Resolved, type Given, type SourceKey } from "./dose-rate-inputs.ts";

export type GrainKind = "coarse" | "fine";
export type DoseRateMineral = "quartz" | "k-feldspar" | "polymineral";

export interface DoseRateSample {
  /** K in %, U and Th in ppm; errors optional (a documented default is then assumed). */
  k: Given;
  u: Given;
  th: Given;
  /** Rb in ppm; absent → estimated from K. */
  rb?: Given | null;
  /** Water content W = mass of water / dry mass (fraction). */
  water: Given;
  mineral: DoseRateMineral;
  grain: {
    kind: GrainKind;
    /** Mean grain diameter; for fine grains 4–11 µm is typical. */
    diameterUm: number;
    /** Depth etched from the grain surface (coarse grains), µm. */
    etchUm?: number | null;
  };
  /** Alpha efficiency; required for fine grains. */
  aValue?: Given | null;
  /** Internal K (%) and Rb (ppm) of K-feldspar grains; absent → published values, assumed. */
  internalK?: Given | null;
  internalRb?: Given | null;
  depthM: Given;
  density: Given;
  site?: { latitude: number; longitude: number; elevationM: number | null } | null;
  /** A lab's own cosmic dose rate, Gy/ka, used instead of the formula. */
  labCosmic?: Given | null;
  factors?: ConversionFactorKey;
}

export interface ErrorSource {
  key: SourceKey;
  label: string;
  value: number;
  error: number;
  assumed: boolean;
  /** How the value or error was obtained when not measured (shown as assumed). */
  assumption?: string;
  /** ∂total/∂input, Gy/ka per unit of the input. */
  sensitivity: number;
  /** |sensitivity| · error, Gy/ka. */
  contribution: number;
  /** Share of the total's variance. */
  varianceShare: number;
}

export type ComponentKey = "beta" | "gamma" | "alpha" | "cosmic" | "internal";

export interface DoseRateComponent {
  key: ComponentKey;
  value: number;
  share: number;
}

export interface FullDoseRate {
  total: number;
  totalError: number;
  components: DoseRateComponent[];
  sources: ErrorSource[];
  factors: ConversionFactorKey;
  /** The publications each conversion comes from, by role. */
  citations: { role: string; source: string }[];
  betaAttenuation: { k: number; u: number; th: number; rb: number };
  cosmic: CosmicResult | null;
  cautions: string[];
}

export class DoseRateInputError extends Error {
  readonly field: string;
  constructor(message: string, field: string) {
    super(message);
    this.name = "DoseRateInputError";
    this.field = field;
  }
}

function checkNonNegative(name: string, field: string, v: Resolved): void {
  if (!(v.value >= 0) || !(v.error >= 0)) throw new DoseRateInputError(`${name} and its error must be zero or more.`, field);
}

/** Total dose rate (Gy/ka) with its analytically propagated error and breakdown. */
export function fullDoseRate(s: DoseRateSample): FullDoseRate {
  const key = s.factors ?? DEFAULT_CONVERSION_FACTORS;
  const f = CONVERSION_FACTORS[key];
  const cautions: string[] = [];
  const K = resolve(s.k, ASSUMED_ERRORS.k);
  const U = resolve(s.u, ASSUMED_ERRORS.u);
  const Th = resolve(s.th, ASSUMED_ERRORS.th);
  const W = resolve(s.water, ASSUMED_ERRORS.water);
  checkNonNegative("K", "k", K);
  checkNonNegative("U", "u", U);
  checkNonNegative("Th", "th", Th);
  checkNonNegative("Water content", "water", W);
  const d = s.grain.diameterUm;
  if (!(d > 0)) throw new DoseRateInputError("The grain size must be positive.", "grain_size");

  // Rb: measured, or K × (ppm per %) with the ratio's own error.
  const rbEstimated = s.rb == null;
  const rbRatio = RB_PPM_PER_K_PERCENT;
  const Rb = rbEstimated
    ? {
        value: K.value * rbRatio.value,
        error: K.value * rbRatio.error,
        assumed: true,
        assumption: `estimated from K (${rbRatio.source})`,
      }
    : resolve(s.rb!, ASSUMED_ERRORS.rb);
  checkNonNegative("Rb", "rb", Rb);

  const etch = s.grain.kind === "coarse" ? (s.grain.etchUm ?? 0) : 0;
  const att = {
    k: betaAbsorbedFraction("k", d) * etchFactor("k", d, etch),
    u: betaAbsorbedFraction("u", d) * etchFactor("u", d, etch),
    th: betaAbsorbedFraction("th", d) * etchFactor("th", d, etch),
    // Rb betas are softer than any tabulated element's; Th's column, the softest, is used.
    rb: betaAbsorbedFraction("th", d) * etchFactor("th", d, etch),
  };
  const wa = waterFactor("alpha", W.value);
  const wb = waterFactor("beta", W.value);
  const wg = waterFactor("gamma", W.value);
  const betaPer = {
    k: f.k.beta * att.k * wb,
    u: f.u.beta * att.u * wb,
    th: f.th.beta * att.th * wb,
    rb: RB_BETA_GY_PER_KA_PER_PPM * att.rb * wb,
  };
  const gammaPer = { k: f.k.gamma * wg, u: f.u.gamma * wg, th: f.th.gamma * wg };

  let A: Resolved | null = null;
  if (s.grain.kind === "fine") {
    if (s.aValue == null) throw new DoseRateInputError("Fine grains need an a-value (alpha efficiency).", "a_value");
    A = resolve(s.aValue, ASSUMED_ERRORS.aValue);
    checkNonNegative("The a-value", "a_value", A);
  } else if (!(etch > 0)) {
    cautions.push("Coarse grains not etched: the alpha dose to their outer rind is not included.");
  }
  const alphaPer = A ? { u: A.value * f.u.alpha * wa, th: A.value * f.th.alpha * wa } : { u: 0, th: 0 };

  const beta = betaPer.k * K.value + betaPer.u * U.value + betaPer.th * Th.value + betaPer.rb * Rb.value;
  const gamma = gammaPer.k * K.value + gammaPer.u * U.value + gammaPer.th * Th.value;
  const alpha = alphaPer.u * U.value + alphaPer.th * Th.value;

  // Internal beta dose of K-feldspar: the part of its own K and Rb betas the grain keeps.
  let internal = 0;
  let Kint: Resolved | null = null;
  let RbInt: Resolved | null = null;
  let intPer = { k: 0, rb: 0 };
  if (s.mineral === "k-feldspar") {
    Kint = s.internalK == null ? fromPublished(FELDSPAR_INTERNAL_K) : resolve(s.internalK, ASSUMED_ERRORS.internalK);
    RbInt = s.internalRb == null ? fromPublished(FELDSPAR_INTERNAL_RB) : resolve(s.internalRb, ASSUMED_ERRORS.internalRb);
    checkNonNegative("Internal K", "internal_k", Kint);
    checkNonNegative("Internal Rb", "internal_rb", RbInt);
    intPer = {
      k: f.k.beta * (1 - betaAbsorbedFraction("k", d)),
      rb: RB_BETA_GY_PER_KA_PER_PPM * (1 - betaAbsorbedFraction("th", d)),
    };
    internal = intPer.k * Kint.value + intPer.rb * RbInt.value;
  }

  const depth = resolve(s.depthM, ASSUMED_ERRORS.depth);
  const density = resolve(s.density, ASSUMED_ERRORS.density);
  let cosmic: number;
  let cosmicResult: CosmicResult | null = null;
  let labCosmic: Resolved | null = null;
  if (s.labCosmic != null) {
    labCosmic = resolve(s.labCosmic, ASSUMED_ERRORS.labCosmic);
    checkNonNegative("The lab's cosmic dose rate", "cosmic", labCosmic);
    cosmic = labCosmic.value;
  } else {
    if (!(depth.value >= 0) || !(depth.error >= 0))
      throw new DoseRateInputError("Depth and its error must be zero or more.", "burial_depth");
    if (!(density.value > 0) || !(density.error >= 0))
      throw new DoseRateInputError("Density must be positive, its error zero or more.", "density");
    cosmicResult = cosmicAtDepth({
      depthM: depth.value,
      depthError: depth.error,
      density: density.value,
      densityError: density.error,
      site: s.site,
    });
    cosmic = cosmicResult.doseRate;
    if (cosmicResult.caution) cautions.push(cosmicResult.caution);
  }
  if (!s.site && !labCosmic)
    cautions.push("No site position: the cosmic dose rate is the sea-level value at 55° geomagnetic latitude.");

  const total = alpha + beta + gamma + cosmic + internal;
  const dW =
    -(WATER_H.beta * beta) / (1 + WATER_H.beta * W.value) -
    (WATER_H.gamma * gamma) / (1 + WATER_H.gamma * W.value) -
    (WATER_H.alpha * alpha) / (1 + WATER_H.alpha * W.value);
  const terms: Omit<ErrorSource, "contribution" | "varianceShare">[] = [
    src("k", "K", K, betaPer.k + gammaPer.k + (rbEstimated ? betaPer.rb * rbRatio.value : 0)),
    src("u", "U", U, betaPer.u + gammaPer.u + alphaPer.u),
    src("th", "Th", Th, betaPer.th + gammaPer.th + alphaPer.th),
    // An estimated Rb's error is K·σ_ratio; its sensitivity is that of Rb itself.
    src("rb", "Rb", Rb, betaPer.rb),
    src("water", "Water content", W, dW),
  ];
  if (A) terms.push(src("aValue", "a-value", A, A.value > 0 ? alpha / A.value : 0));
  if (Kint && RbInt) {
    terms.push(src("internalK", "Internal K", Kint, intPer.k));
    terms.push(src("internalRb", "Internal Rb", RbInt, intPer.rb));
  }
  if (labCosmic) terms.push(src("labCosmic", "Cosmic (lab's value)", labCosmic, 1));
  else if (cosmicResult) {
    terms.push(src("depth", "Burial depth", depth, cosmicResult.dDepth));
    terms.push(src("density", "Density", density, cosmicResult.dDensity));
    terms.push({
      key: "cosmicFormula",
      label: "Cosmic formula allowance",
      value: cosmic,
      error: cosmicResult.formulaError,
      assumed: true,
      assumption: "10 % of the cosmic dose rate (common practice)",
      sensitivity: 1,
    });
  }
  const withContribution = terms.map((t) => ({ ...t, contribution: Math.abs(t.sensitivity) * t.error }));
  const variance = withContribution.reduce((a, t) => a + t.contribution ** 2, 0);
  const sources = withContribution.map((t) => ({ ...t, varianceShare: variance > 0 ? t.contribution ** 2 / variance : 0 }));
  const components: DoseRateComponent[] = (
    [
      ["beta", beta],
      ["gamma", gamma],
      ["alpha", alpha],
      ["cosmic", cosmic],
      ["internal", internal],
    ] as const
  ).map(([k, v]) => ({ key: k, value: v, share: v / total }));
  const citations = [
    { role: "conversion factors", source: f.citation },
    { role: "water absorption", source: "Zimmerman 1971; Aitken 1985" },
    { role: "beta attenuation by grain size", source: BETA_ABSORBED_FRACTION.source },
  ];
  if (labCosmic) citations.push({ role: "cosmic", source: "the lab's own value" });
  else citations.push({ role: "cosmic", source: "Prescott & Hutton 1994" });
  if (Kint)
    citations.push({ role: "internal K and Rb", source: `${FELDSPAR_INTERNAL_K.source}; ${FELDSPAR_INTERNAL_RB.source}` });
  if (total > 0 && Math.sqrt(variance) / total < 0.03)
    cautions.push("The dose-rate error is below 3 %, which is implausible for a field sample.");
  return {
    total,
    totalError: Math.sqrt(variance),
    components,
    sources,
    factors: key,
    citations,
    betaAttenuation: att,
    cosmic: cosmicResult,
    cautions,
  };
}

function fromPublished(p: { value: number; error: number; source: string }): Resolved {
  return { value: p.value, error: p.error, assumed: true, assumption: `published value (${p.source})` };
}

function src(
  key: SourceKey,
  label: string,
  v: Resolved,
  sensitivity: number,
): Omit<ErrorSource, "contribution" | "varianceShare"> {
  return { key, label, value: v.value, error: v.error, assumed: v.assumed, assumption: v.assumption, sensitivity };
}

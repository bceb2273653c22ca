// Luminescence ages: age = De / dose rate, the dose rate from K, U and Th with published
// conversion factors, water attenuation and the cosmic contribution, and conversion to cal BP.

export interface ValueError {
  value: number;
  error: number;
}

export interface LuminescenceAge {
  /** Age in ka before the year of measurement. */
  ageKa: number;
  errorKa: number;
  relativeError: number;
}

/** Age = De / Ḋ; relative errors add in quadrature (Aitken 1985), De and Ḋ taken as independent. */
export function luminescenceAge(de: ValueError, doseRate: ValueError): LuminescenceAge {
  if (!(de.value > 0) || !(doseRate.value > 0)) throw new Error("De and dose rate must be positive.");
  if (!(de.error >= 0) || !(doseRate.error >= 0)) throw new Error("Errors must be zero or more.");
  const ageKa = de.value / doseRate.value;
  const rel = Math.hypot(de.error / de.value, doseRate.error / doseRate.value);
  return { ageKa, errorKa: ageKa * rel, relativeError: rel };
}

/**
 * Luminescence ages count back from the year of measurement; cal BP counts back from AD 1950.
 * Returns years (cal BP) and the error in years.
 */
export function luminescenceAgeToCalBp(
  ageKa: number,
  errorKa: number,
  measurementYear: number,
): { calBp: number; error: number } {
  return { calBp: ageKa * 1000 - (measurementYear - 1950), error: errorKa * 1000 };
}

export type ConversionFactorKey = "guerin2011" | "adamiec1998";

export interface ConversionFactors {
  key: ConversionFactorKey;
  citation: string;
  /** Gy/ka per % K. */
  k: { beta: number; gamma: number };
  /** Gy/ka per ppm U (and Th). */
  u: { alpha: number; beta: number; gamma: number };
  th: { alpha: number; beta: number; gamma: number };
}

// From memory per CHECK_VALUES B2 — "confirm before use"; kept selectable and recorded in results.
export const CONVERSION_FACTORS: Readonly<Record<ConversionFactorKey, ConversionFactors>> = {
  guerin2011: {
    key: "guerin2011",
    citation: "Guérin, Mercier & Adamiec 2011, Ancient TL 29(1):5–8",
    k: { beta: 0.7982, gamma: 0.2491 },
    u: { alpha: 2.795, beta: 0.1457, gamma: 0.1116 },
    th: { alpha: 0.7375, beta: 0.0277, gamma: 0.0479 },
  },
  adamiec1998: {
    key: "adamiec1998",
    citation: "Adamiec & Aitken 1998, Ancient TL 16(2):37–46",
    k: { beta: 0.782, gamma: 0.243 },
    u: { alpha: 2.78, beta: 0.146, gamma: 0.113 },
    th: { alpha: 0.738, beta: 0.0286, gamma: 0.0514 },
  },
};

export const DEFAULT_CONVERSION_FACTORS: ConversionFactorKey = "guerin2011";

export interface DryDoseRates {
  alpha: number;
  beta: number;
  gamma: number;
}

/** Infinite-matrix dry dose rates (Gy/ka) from K (%), U (ppm) and Th (ppm). */
export function dryDoseRates(
  k: number,
  u: number,
  th: number,
  key: ConversionFactorKey = DEFAULT_CONVERSION_FACTORS,
): DryDoseRates {
  const f = CONVERSION_FACTORS[key];
  return {
    alpha: f.u.alpha * u + f.th.alpha * th,
    beta: f.k.beta * k + f.u.beta * u + f.th.beta * th,
    gamma: f.k.gamma * k + f.u.gamma * u + f.th.gamma * th,
  };
}

/** Zimmerman 1971 / Aitken 1985: water absorbs more of each radiation than the same mass of mineral. */
export const WATER_H = { alpha: 1.5, beta: 1.25, gamma: 1.14 } as const;

export type Radiation = keyof typeof WATER_H;

/** Factor Ḋ_wet/Ḋ_dry for water content W = water mass / dry mass (a fraction, not %). */
export function waterFactor(radiation: Radiation, water: number): number {
  return 1 / (1 + WATER_H[radiation] * water);
}

/** Below this overburden (hg/cm²) the cosmic formula is outside its stated validity. */
export const COSMIC_MIN_OVERBURDEN = 1.67;

/**
 * Cosmic dose rate (Gy/ka) at sea level and geomagnetic latitude 55° under `x` hg/cm² of
 * overburden (Prescott & Hutton 1994, from memory). Valid for x above 1.67 hg/cm².
 */
export function cosmicDoseRate(x: number): number {
  return (6072 / ((Math.pow(x + 11.6, 1.68) + 75) * (x + 212))) * Math.exp(-5.5e-4 * x);
}

/**
 * 1 m of sediment at 1 g/cm³ is 100 g/cm² = 1 hg/cm², so the overburden in hg/cm² is simply
 * depth (m) × density (g/cm³).
 */
export function overburden(depthM: number, densityGcm3: number): number {
  return depthM * densityGcm3;
}

export interface CosmicResult {
  x: number;
  doseRate: number;
  error: number;
  withinValidity: boolean;
  note?: string;
}

/**
 * Cosmic contribution at a burial depth. Its error combines the depth and density errors
 * (through the formula's slope) with a relative allowance for the formula itself.
 */
export function cosmicAtDepth(input: {
  depthM: number;
  depthError?: number;
  density: number;
  densityError?: number;
  /** Relative uncertainty of the formula; 10 % is a common-practice allowance. */
  relativeError?: number;
}): CosmicResult {
  const { depthM, density } = input;
  if (!(depthM >= 0) || !(density > 0)) throw new Error("Depth must be ≥ 0 m and density > 0 g/cm³.");
  const x = overburden(depthM, density);
  const d = cosmicDoseRate(x);
  const h = 1e-4;
  const slope = (cosmicDoseRate(x + h) - cosmicDoseRate(Math.max(0, x - h))) / (x + h - Math.max(0, x - h));
  const sx = Math.hypot((input.depthError ?? 0) * density, (input.densityError ?? 0) * depthM);
  const rel = input.relativeError ?? 0.1;
  const error = Math.hypot(slope * sx, rel * d);
  const withinValidity = x > COSMIC_MIN_OVERBURDEN;
  return {
    x,
    doseRate: d,
    error,
    withinValidity,
    note: withinValidity
      ? undefined
      : `Overburden ${x.toFixed(2)} hg/cm² is below ${COSMIC_MIN_OVERBURDEN} hg/cm², where the cosmic formula is not valid; the value is an extrapolation.`,
  };
}

export interface DoseRateInput {
  /** Potassium, %. */
  k: ValueError;
  /** Uranium, ppm. */
  u: ValueError;
  /** Thorium, ppm. */
  th: ValueError;
  /** Water content W = mass of water / dry mass (fraction). */
  water: ValueError;
  factors?: ConversionFactorKey;
  /**
   * Grain-size beta attenuation as a plain multiplier (default 1, i.e. none). The user supplies
   * it from the published table they follow; no table is built in.
   */
  betaAttenuation?: number;
  /**
   * Effective alpha contribution. Default: none, for coarse-grain quartz whose alpha-dosed
   * outer rind was removed by etching. Give an a-value for fine grains or unetched material.
   */
  alpha?: { aValue: number; aValueError?: number };
  /** Internal dose rate (e.g. K-feldspar), Gy/ka, added as given. */
  internal?: ValueError;
  burial: { depthM: number; depthError?: number; density: number; densityError?: number };
  /** Replaces the computed cosmic dose rate (e.g. with altitude/latitude scaling done elsewhere). */
  cosmicOverride?: ValueError;
  cosmicRelativeError?: number;
}

export interface DoseRateBreakdown {
  factors: ConversionFactorKey;
  alpha: number;
  beta: number;
  gamma: number;
  cosmic: number;
  internal: number;
  total: number;
  alphaError: number;
  betaError: number;
  gammaError: number;
  cosmicError: number;
  internalError: number;
  totalError: number;
  cosmicWithinValidity: boolean;
  notes: string[];
}

/**
 * Total environmental dose rate (Gy/ka). Errors: each input (K, U, Th, W, a-value, depth,
 * density, cosmic allowance, internal) is treated as independent; the total's error is the
 * quadrature sum over inputs of |∂total/∂input| · σ_input. K, U, Th and W each feed several
 * components, so the total's error is not the quadrature sum of the component errors.
 * Conversion factors are treated as exact.
 */
export function doseRate(input: DoseRateInput): DoseRateBreakdown {
  const key = input.factors ?? DEFAULT_CONVERSION_FACTORS;
  const f = CONVERSION_FACTORS[key];
  const W = input.water.value;
  const att = input.betaAttenuation ?? 1;
  for (const [name, v] of [
    ["K", input.k],
    ["U", input.u],
    ["Th", input.th],
    ["water", input.water],
  ] as const) {
    if (!(v.value >= 0) || !(v.error >= 0)) throw new Error(`${name} and its error must be zero or more.`);
  }
  const notes: string[] = [];
  const wa = waterFactor("alpha", W);
  const wb = waterFactor("beta", W);
  const wg = waterFactor("gamma", W);

  // Per-unit-concentration contributions to each wet component.
  const betaPer = { k: f.k.beta * att * wb, u: f.u.beta * att * wb, th: f.th.beta * att * wb };
  const gammaPer = { k: f.k.gamma * wg, u: f.u.gamma * wg, th: f.th.gamma * wg };
  const aValue = input.alpha?.aValue ?? 0;
  const alphaPer = { u: aValue * f.u.alpha * wa, th: aValue * f.th.alpha * wa };

  const K = input.k.value;
  const U = input.u.value;
  const Th = input.th.value;
  const beta = betaPer.k * K + betaPer.u * U + betaPer.th * Th;
  const gamma = gammaPer.k * K + gammaPer.u * U + gammaPer.th * Th;
  const alpha = alphaPer.u * U + alphaPer.th * Th;
  if (!input.alpha) notes.push("Alpha contribution ignored (coarse-grain quartz, etched).");

  let cosmic: number;
  let cosmicError: number;
  let cosmicWithinValidity = true;
  if (input.cosmicOverride) {
    cosmic = input.cosmicOverride.value;
    cosmicError = input.cosmicOverride.error;
  } else {
    const c = cosmicAtDepth({ ...input.burial, relativeError: input.cosmicRelativeError });
    cosmic = c.doseRate;
    cosmicError = c.error;
    cosmicWithinValidity = c.withinValidity;
    if (c.note) notes.push(c.note);
  }
  const internal = input.internal?.value ?? 0;
  const internalError = input.internal?.error ?? 0;

  // ∂(wet component)/∂W = −H · dry / (1 + H W)² = −H · wet / (1 + H W).
  const dBetaDW = (-WATER_H.beta * beta) / (1 + WATER_H.beta * W);
  const dGammaDW = (-WATER_H.gamma * gamma) / (1 + WATER_H.gamma * W);
  const dAlphaDW = (-WATER_H.alpha * alpha) / (1 + WATER_H.alpha * W);
  const sK = input.k.error;
  const sU = input.u.error;
  const sTh = input.th.error;
  const sW = input.water.error;
  const sA = input.alpha?.aValueError ?? 0;

  const betaError = Math.hypot(betaPer.k * sK, betaPer.u * sU, betaPer.th * sTh, dBetaDW * sW);
  const gammaError = Math.hypot(gammaPer.k * sK, gammaPer.u * sU, gammaPer.th * sTh, dGammaDW * sW);
  const alphaFromA = aValue > 0 ? (alpha / aValue) * sA : 0;
  const alphaError = Math.hypot(alphaPer.u * sU, alphaPer.th * sTh, dAlphaDW * sW, alphaFromA);

  const totalError = Math.hypot(
    (betaPer.k + gammaPer.k) * sK,
    (betaPer.u + gammaPer.u + alphaPer.u) * sU,
    (betaPer.th + gammaPer.th + alphaPer.th) * sTh,
    (dBetaDW + dGammaDW + dAlphaDW) * sW,
    alphaFromA,
    cosmicError,
    internalError,
  );
  return {
    factors: key,
    alpha,
    beta,
    gamma,
    cosmic,
    internal,
    total: alpha + beta + gamma + cosmic + internal,
    alphaError,
    betaError,
    gammaError,
    cosmicError,
    internalError,
    totalError,
    cosmicWithinValidity,
    notes,
  };
}

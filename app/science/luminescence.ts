// Luminescence ages: age = De / dose rate, the dose rate from K, U and Th with published
// conversion factors, water attenuation and the cosmic contribution, and conversion to cal BP.

import {
  CONVERSION_FACTORS,
  DEFAULT_CONVERSION_FACTORS,
  WATER_H,
  waterFactor,
  type ConversionFactorKey,
} from "./dose-rate-factors.ts";
import { cosmicAtDepth } from "./cosmic.ts";

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

export {
  CONVERSION_FACTORS,
  DEFAULT_CONVERSION_FACTORS,
  WATER_H,
  waterFactor,
  type ConversionFactorKey,
  type ConversionFactors,
  type Radiation,
} from "./dose-rate-factors.ts";
export { COSMIC_MIN_OVERBURDEN, cosmicAtDepth, cosmicDoseRate, overburden, type CosmicResult } from "./cosmic.ts";

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
 * The earlier, simpler dose rate (no grain size, Rb, site scaling or default errors), kept for
 * the callers that still pass bare K, U, Th and water; fullDoseRate (dose-rate.ts) is the
 * complete computation. Total environmental dose rate (Gy/ka). Errors: each input (K, U, Th, W, a-value, depth,
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
    const c = cosmicAtDepth({
      depthM: input.burial.depthM,
      depthError: input.burial.depthError ?? 0,
      density: input.burial.density,
      densityError: input.burial.densityError ?? 0,
      relativeError: input.cosmicRelativeError,
    });
    cosmic = c.doseRate;
    cosmicError = c.error;
    cosmicWithinValidity = c.withinValidity;
    if (c.caution) notes.push(c.caution);
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

// Published constants of the dose-rate computation: conversion factors per element, water
// absorption, beta attenuation by grain size, Rb, and the internal K and Rb of K-feldspar.
// Each constant names its source; "from memory" marks values not confirmed against the paper.

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

export function isConversionFactorKey(x: unknown): x is ConversionFactorKey {
  return typeof x === "string" && Object.hasOwn(CONVERSION_FACTORS, x);
}

/** Zimmerman 1971 / Aitken 1985: water absorbs more of each radiation than the same mass of mineral. */
export const WATER_H = { alpha: 1.5, beta: 1.25, gamma: 1.14 } as const;

export type Radiation = keyof typeof WATER_H;

/** Factor Ḋ_wet/Ḋ_dry for water content W = water mass / dry mass (a fraction, not %). */
export function waterFactor(radiation: Radiation, water: number): number {
  return 1 / (1 + WATER_H[radiation] * water);
}

/**
 * Beta dose rate of Rb in Gy/ka per ppm, derived from nuclear data (from memory): ⁸⁷Rb is
 * 27.83 % of Rb, half-life 4.97 × 10¹⁰ yr, mean beta energy 81.7 keV; all of it deposited in an
 * infinite matrix. 1 ppm Rb → 0.8675 Bq/kg → 3.60 × 10⁻⁴ Gy/ka.
 */
export const RB_BETA_GY_PER_KA_PER_PPM = rbBetaFactor();

function rbBetaFactor(): number {
  const avogadro = 6.02214076e23;
  const secondsPerYear = 365.25 * 86400;
  const atoms87PerKgPerPpm = (1e-3 / 85.4678) * 0.2783 * avogadro; // 1 mg of Rb in 1 kg
  const lambdaPerSecond = Math.LN2 / (4.97e10 * secondsPerYear);
  const joulesPerDecay = 81.7e3 * 1.602176634e-19;
  return atoms87PerKgPerPpm * lambdaPerSecond * joulesPerDecay * secondsPerYear * 1000;
}

/**
 * Rb estimated from K when a lab gives none: a crustal K/Rb mass ratio of about 200 (from
 * memory; common practice), i.e. 50 ppm Rb per % K, with ±25 % for the spread of the ratio
 * (assumed).
 */
export const RB_PPM_PER_K_PERCENT = { value: 50, error: 12.5, source: "K/Rb mass ratio ≈ 200 (common practice, from memory)" };

/** Internal K of K-feldspar grains (Huntley & Baril 1997, Ancient TL 15:11–13). */
export const FELDSPAR_INTERNAL_K = { value: 12.5, error: 0.5, source: "Huntley & Baril 1997" };
/** Internal Rb of K-feldspar grains (Huntley & Hancock 2001, Ancient TL 19:43–46; from memory). */
export const FELDSPAR_INTERNAL_RB = { value: 400, error: 100, source: "Huntley & Hancock 2001 (from memory)" };

export type Element = "k" | "u" | "th";

/**
 * Fraction of the infinite-matrix beta dose absorbed by a quartz grain of the given diameter
 * (Mejdahl 1979, Archaeometry 21:61–72; values from memory, not confirmed against the paper's
 * table here). Interpolated linearly in log-diameter; clamped at the table's ends.
 */
export const BETA_ABSORBED_FRACTION = {
  source: "Mejdahl 1979 (from memory)",
  diameterUm: [10, 20, 50, 100, 150, 200, 300, 400, 500, 1000, 2000],
  k: [0.997, 0.994, 0.983, 0.966, 0.95, 0.933, 0.901, 0.87, 0.841, 0.716, 0.54],
  u: [0.991, 0.983, 0.957, 0.916, 0.876, 0.839, 0.771, 0.712, 0.661, 0.478, 0.3],
  th: [0.988, 0.976, 0.942, 0.885, 0.831, 0.784, 0.703, 0.636, 0.581, 0.402, 0.24],
} as const;

export function betaAbsorbedFraction(element: Element, diameterUm: number): number {
  if (!(diameterUm > 0)) throw new Error("The grain diameter must be positive.");
  const d = BETA_ABSORBED_FRACTION.diameterUm;
  const v = BETA_ABSORBED_FRACTION[element];
  if (diameterUm <= d[0]) return v[0];
  if (diameterUm >= d[d.length - 1]) return v[v.length - 1];
  let i = 0;
  while (d[i + 1] < diameterUm) i++;
  const t = (Math.log(diameterUm) - Math.log(d[i])) / (Math.log(d[i + 1]) - Math.log(d[i]));
  return v[i] + t * (v[i + 1] - v[i]);
}

/**
 * Extra factor on the external beta dose of a grain whose outer `etchUm` was etched away
 * (derived approximation, stated): in a slab model the external beta dose at depth x falls as
 * ½(e^(−x/L) + e^(−(d−x)/L)), whose mean over the grain is (L/d)(1 − e^(−d/L)); L is fitted so
 * that mean matches the tabulated absorbed fraction at the grain's diameter, and the etched
 * grain keeps the mean over its core [e, d − e]. The removed rind held the highest dose, so the
 * factor is at most 1.
 */
export function etchFactor(element: Element, diameterUm: number, etchUm: number): number {
  if (!(etchUm > 0)) return 1;
  if (!(2 * etchUm < diameterUm)) throw new Error("The etched depth must be less than half the grain diameter.");
  const d = diameterUm;
  const phi = betaAbsorbedFraction(element, d);
  const mean = (L: number) => (L / d) * (1 - Math.exp(-d / L));
  // mean(L) rises monotonically from 0 to 1 with L; bisection in log L.
  let lo = Math.log(d * 1e-3);
  let hi = Math.log(d * 1e6);
  for (let i = 0; i < 100; i++) {
    const mid = 0.5 * (lo + hi);
    if (mean(Math.exp(mid)) < phi) lo = mid;
    else hi = mid;
  }
  const L = Math.exp(0.5 * (lo + hi));
  const e = etchUm;
  const core = (L / (d - 2 * e)) * (Math.exp(-e / L) - Math.exp(-(d - e) / L));
  return core / mean(L);
}

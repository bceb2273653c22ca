// Consistency between determinations: replicate radiocarbon ages (Ward & Wilson 1978), the
// central age model for equivalent doses (Galbraith et al. 1999), and the probability that
// one calendar age is older than another (stratigraphic order).

import type { CalendarDensity } from "./density.ts";
import { chiSquareCdf, chiSquareQuantile } from "./stats.ts";

export interface AgeWithError {
  age: number;
  error: number;
}

export interface WardWilsonResult {
  pooledMean: number;
  pooledError: number;
  /** Σ (x_i − x̄)² / σ_i². */
  t: number;
  df: number;
  /** χ² value the statistic must stay below at the chosen significance. */
  critical: number;
  /** P(χ²_df ≥ T): chance of a spread this large if all date one event. */
  pValue: number;
  consistent: boolean;
}

/**
 * Ward & Wilson 1978 (from memory): inverse-variance pooled mean and the χ² test that the
 * determinations share one true age. Needs at least two determinations.
 */
export function wardWilson(dates: readonly AgeWithError[], significance = 0.05): WardWilsonResult {
  if (dates.length < 2) throw new Error("At least two determinations are needed.");
  let sw = 0;
  let swx = 0;
  for (const d of dates) {
    if (!(d.error > 0) || !Number.isFinite(d.age)) throw new Error("Each determination needs an age and a positive error.");
    const w = 1 / (d.error * d.error);
    sw += w;
    swx += w * d.age;
  }
  const mean = swx / sw;
  let t = 0;
  for (const d of dates) t += ((d.age - mean) / d.error) ** 2;
  const df = dates.length - 1;
  const critical = chiSquareQuantile(1 - significance, df);
  return {
    pooledMean: mean,
    pooledError: 1 / Math.sqrt(sw),
    t,
    df,
    critical,
    pValue: 1 - chiSquareCdf(t, df),
    consistent: t < critical,
  };
}

export interface DoseWithError {
  de: number;
  error: number;
}

export interface CentralAgeModelResult {
  /** Central De, Gy. */
  de: number;
  deError: number;
  /** Overdispersion σ as a fraction (0.256 = 25.6 %). */
  overdispersion: number;
  /** δ = ln(central De) and its standard error. */
  logMean: number;
  logMeanError: number;
  iterations: number;
}

/**
 * Central age model (Galbraith et al. 1999, from memory). σ is found by the fixed-point
 * update σ ← σ·√(Σ w_i²(z_i − δ)² / Σ w_i), whose fixed point is the stated equation; when
 * the scatter is no larger than the stated errors explain, σ is 0.
 */
export function centralAgeModel(doses: readonly DoseWithError[]): CentralAgeModelResult {
  if (doses.length < 1) throw new Error("At least one De is needed.");
  const z: number[] = [];
  const s: number[] = [];
  for (const d of doses) {
    if (!(d.de > 0) || !(d.error > 0)) throw new Error("Each De and its error must be positive.");
    z.push(Math.log(d.de));
    s.push(d.error / d.de);
  }
  const n = z.length;
  const fit = (sigma: number) => {
    let sw = 0;
    let swz = 0;
    const w = new Array<number>(n);
    for (let i = 0; i < n; i++) {
      w[i] = 1 / (sigma * sigma + s[i] * s[i]);
      sw += w[i];
      swz += w[i] * z[i];
    }
    const delta = swz / sw;
    let sw2r2 = 0;
    for (let i = 0; i < n; i++) sw2r2 += w[i] * w[i] * (z[i] - delta) ** 2;
    return { delta, sw, ratio: sw2r2 / sw };
  };
  let sigma = 0;
  let iterations = 0;
  let f = fit(0);
  if (f.ratio > 1) {
    sigma = 0.15;
    for (iterations = 1; iterations <= 10000; iterations++) {
      f = fit(sigma);
      const next = sigma * Math.sqrt(f.ratio);
      const done = Math.abs(next - sigma) < 1e-12;
      sigma = next;
      if (done) break;
    }
    f = fit(sigma);
  }
  const se = 1 / Math.sqrt(f.sw);
  const de = Math.exp(f.delta);
  return { de, deError: de * se, overdispersion: sigma, logMean: f.delta, logMeanError: se, iterations };
}

/**
 * P(θ_A > θ_B): the chance that A's calendar age is older (larger cal BP) than B's, the two
 * taken as independent. Years where both could fall count half, so
 * probabilityOlder(a, b) + probabilityOlder(b, a) = 1.
 */
export function probabilityOlder(a: CalendarDensity, b: CalendarDensity): number {
  const bv = b.values;
  const nb = bv.length;
  const cum = new Float64Array(nb + 1);
  for (let j = 0; j < nb; j++) cum[j + 1] = cum[j] + bv[j];
  const totalB = cum[nb];
  let totalA = 0;
  let p = 0;
  for (let i = 0; i < a.values.length; i++) {
    const pa = a.values[i];
    if (pa === 0) continue;
    totalA += pa;
    const j = a.startCalBp + i - b.startCalBp;
    let younger: number;
    if (j < 0) younger = 0;
    else if (j >= nb) younger = totalB;
    else younger = cum[j] + 0.5 * bv[j];
    p += pa * younger;
  }
  if (!(totalA > 0) || !(totalB > 0)) throw new Error("Both densities must hold some probability.");
  return p / (totalA * totalB);
}

// Calibration of one radiocarbon age against a prepared curve (Bayes with a uniform prior on
// a 1-year calendar grid; Bronk Ramsey 2009). The likelihood follows CHECK_VALUES A4.

import { groupThousands } from "./calendar.ts";
import { SUPER_BLOCK, type PreparedCurve } from "./curve.ts";
import { expNonPositive } from "./fastexp.ts";
import { finishAndSummarise, type CalendarDensity, type DensitySummary } from "./density.ts";

export { normalDensity, summariseDensity, type CalendarDensity, type DensitySummary, type Range } from "./density.ts";

export interface CalibrationInput {
  /** Conventional radiocarbon age, 14C yr BP. */
  age: number;
  /** 1σ of the age, years. */
  error: number;
  /**
   * The same measurement as F14C ± 1σ. Below F14C_SPACE_BELOW the likelihood is taken in F14C
   * space, where the measurement's error is symmetric, instead of through a symmetric age error.
   */
  f14c?: number;
  f14cError?: number;
  /** Local reservoir offset against this curve (marine ΔR, or a freshwater offset), 14C yr. */
  deltaR?: number;
  deltaRError?: number;
  /** The curve's name as people know it, for messages (default: the prepared curve's name). */
  curveLabel?: string;
}

export interface CalibrationResult extends DensitySummary {
  curveName: string;
  density: CalendarDensity;
  /** True when non-negligible probability reaches the first or last year of the curve. */
  atCurveLimit: boolean;
  /** True when the likelihood was computed in F14C space (near background). */
  inF14cSpace: boolean;
  /** Plain notes for the reader: truncation at the curve's end, F14C space. */
  notes: string[];
}

export type CalibrationErrorCode = "invalid-input" | "beyond-curve";

export class CalibrationError extends Error {
  readonly code: CalibrationErrorCode;
  constructor(message: string, code: CalibrationErrorCode) {
    super(message);
    this.name = "CalibrationError";
    this.code = code;
  }
}

/**
 * Likelihood is treated as zero beyond this many combined standard deviations: e^−18 ≈ 1.5e−8,
 * well below the 1e−6 trim applied to stored densities.
 */
const CUTOFF_SD = 6;
const CUTOFF2 = CUTOFF_SD * CUTOFF_SD;
/** A measurement calibrates when its 2σ range (with the curve's own σ) reaches the curve's range. */
export const REACH_SD = 2;
/** Below this F14C (about 37,000 14C yr BP) the likelihood is taken in F14C space. */
export const F14C_SPACE_BELOW = 0.01;

let scratch = new Float64Array(4096);

function fmt(x: number): string {
  return groupThousands(Math.round(x));
}

/** The 14C ages, after ΔR, that the curve spans. */
export function curveAgeLimits(prepared: PreparedCurve, deltaR = 0): { min: number; max: number } {
  return { min: prepared.minC14 + deltaR, max: prepared.maxC14 + deltaR };
}

/** How far (2σ, widened by the curve's own σ at each end and σ_ΔR) the age reaches below and above. */
function reach(prepared: PreparedCurve, input: CalibrationInput): { below: number; above: number } {
  const drs = input.deltaRError ?? 0;
  return {
    below: Math.hypot(input.error, drs, prepared.minC14Sigma) * REACH_SD,
    above: Math.hypot(input.error, drs, prepared.maxC14Sigma) * REACH_SD,
  };
}

/**
 * Why a measurement cannot be calibrated on this curve, or null when it can: it is refused only
 * when its 2σ range, widened by the curve's own σ at that end and σ_ΔR, lies wholly outside the
 * curve's 14C range, so it cannot overlap the curve. Forms and uploads call this too.
 */
export function beyondCurve(prepared: PreparedCurve, input: CalibrationInput): string | null {
  const deltaR = input.deltaR ?? 0;
  const drs = input.deltaRError ?? 0;
  const lim = curveAgeLimits(prepared, deltaR);
  const name = input.curveLabel ?? prepared.name;
  const last = prepared.startCalBp + prepared.length - 1;
  const covers =
    `${name} covers ${fmt(lim.min)}–${fmt(lim.max)} ¹⁴C yr BP${deltaR !== 0 ? ` with ΔR ${fmt(deltaR)}` : ""} ` +
    `(${fmt(prepared.startCalBp)}–${fmt(last)} cal BP)`;
  const { below, above } = reach(prepared, input);
  if (useF14cSpace(input)) {
    // The same test in F14C, where the error is symmetric: F + 2σ must reach the curve's oldest F.
    const fOld = ageToF(lim.max);
    const sCurve = (fOld * Math.hypot(prepared.maxC14Sigma, drs)) / LIBBY;
    if (input.f14c! + REACH_SD * Math.hypot(input.f14cError!, sCurve) < fOld) {
      return `F¹⁴C ${input.f14c!.toPrecision(3)} ± ${input.f14cError!.toPrecision(2)} is beyond the curve and cannot overlap it: even F¹⁴C + 2σ is below ${name}'s oldest value (${fOld.toPrecision(3)}); ${covers}.`;
    }
    return null;
  }
  if (input.age + below < lim.min) {
    return `${fmt(input.age)} ± ${fmt(input.error)} ¹⁴C yr BP is beyond the curve and cannot overlap it: even its age + 2σ (${fmt(input.age + below)}) is younger than the curve reaches; ${covers}.`;
  }
  if (input.age - above > lim.max) {
    return `${fmt(input.age)} ± ${fmt(input.error)} ¹⁴C yr BP is beyond the curve and cannot overlap it: even its age − 2σ (${fmt(input.age - above)}) is older than the curve reaches; ${covers}.`;
  }
  return null;
}

const LIBBY = 8033;
function ageToF(age: number): number {
  return Math.exp(-age / LIBBY);
}

function useF14cSpace(input: CalibrationInput): boolean {
  return input.f14c !== undefined && input.f14cError !== undefined && input.f14c < F14C_SPACE_BELOW && input.f14cError > 0;
}

function checkInput(input: CalibrationInput): void {
  const { age, error } = input;
  if (!Number.isFinite(age)) throw new CalibrationError("The radiocarbon age must be a number.", "invalid-input");
  if (!(error > 0) || !Number.isFinite(error)) {
    throw new CalibrationError("The age error must be a positive number.", "invalid-input");
  }
  if (!Number.isFinite(input.deltaR ?? 0)) throw new CalibrationError("ΔR must be a number.", "invalid-input");
  const drs = input.deltaRError ?? 0;
  if (!(drs >= 0) || !Number.isFinite(drs)) {
    throw new CalibrationError("The ΔR error must be zero or more.", "invalid-input");
  }
}

/** Whether a block of the curve (its 14C min and max, largest σ²) lies within the cutoff of `mu`. Squared distances avoid a square root per block. */
function withinCutoff(mu: number, extraVar: number) {
  return (lo: number, hi: number, maxS2: number) => {
    const d = mu < lo ? lo - mu : mu > hi ? mu - hi : 0;
    return d * d <= CUTOFF2 * (extraVar + maxS2);
  };
}

/** The first and last block of the curve where the likelihood of `mu` (variance `extraVar` besides the curve's) is not cut off; -1 when none. */
function likelihoodBlocks(prepared: PreparedCurve, mu: number, extraVar: number): { bFirst: number; bLast: number } {
  const { blockMinC, blockMaxC, blockMaxS2, superMinC, superMaxC, superMaxS2 } = prepared;
  const within = withinCutoff(mu, extraVar);
  const nBlocks = blockMinC.length;
  let bFirst = -1;
  let bLast = -1;
  for (let k = 0; k < superMinC.length; k++) {
    if (!within(superMinC[k], superMaxC[k], superMaxS2[k])) continue;
    const bEnd = Math.min(nBlocks, (k + 1) * SUPER_BLOCK);
    for (let b = k * SUPER_BLOCK; b < bEnd; b++) {
      if (within(blockMinC[b], blockMaxC[b], blockMaxS2[b])) {
        if (bFirst < 0) bFirst = b;
        bLast = b;
      }
    }
  }
  return { bFirst, bLast };
}

/**
 * The calendar years `calibrate` computes the likelihood over for this input: the measure of its
 * work (time and, with a density, the size of the answer grow with it). 0 when the input cannot be
 * calibrated on this curve (invalid, or beyond it). Costs one pass over the curve's block index.
 */
export function calibrationSpan(prepared: PreparedCurve, input: CalibrationInput): number {
  try {
    checkInput(input);
  } catch {
    return 0;
  }
  if (useF14cSpace(input)) return beyondCurve(prepared, input) ? 0 : prepared.length;
  // beyondCurve's test without its message (this runs for every item of a request).
  const lim = curveAgeLimits(prepared, input.deltaR ?? 0);
  const { below, above } = reach(prepared, input);
  if (input.age + below < lim.min || input.age - above > lim.max) return 0;
  const mu = input.age - (input.deltaR ?? 0);
  const extraVar = input.error * input.error + (input.deltaRError ?? 0) ** 2;
  const { bFirst, bLast } = likelihoodBlocks(prepared, mu, extraVar);
  if (bFirst < 0) return 0;
  return Math.min(prepared.length, (bLast + 1) * prepared.blockSize) - bFirst * prepared.blockSize;
}

export function calibrate(prepared: PreparedCurve, input: CalibrationInput): CalibrationResult {
  checkInput(input);
  const refusal = beyondCurve(prepared, input);
  if (refusal) throw new CalibrationError(refusal, "beyond-curve");
  if (useF14cSpace(input)) return finish(prepared, input, likelihoodInF14c(prepared, input), true);
  const { age, error } = input;
  const deltaR = input.deltaR ?? 0;
  const deltaRError = input.deltaRError ?? 0;
  const mu = age - deltaR;
  const extraVar = error * error + deltaRError * deltaRError;
  const { blockSize, blockMinC, blockMaxC, blockMaxS2, c, s2, length } = prepared;
  const within = withinCutoff(mu, extraVar);
  const { bFirst, bLast } = likelihoodBlocks(prepared, mu, extraVar);
  if (bFirst < 0) {
    // Only reachable if the curve has gaps in 14C coverage wider than the cutoff.
    throw new CalibrationError(`${fmt(age)} ¹⁴C yr BP matches no part of ${input.curveLabel ?? prepared.name}.`, "beyond-curve");
  }
  const g0 = bFirst * blockSize;
  const g1 = Math.min(length, (bLast + 1) * blockSize);
  const span = g1 - g0;
  if (scratch.length < span) scratch = new Float64Array(Math.max(span, scratch.length * 2));
  const work = scratch;

  let max = 0;
  for (let b = bFirst; b <= bLast; b++) {
    const a = b * blockSize - g0;
    const e = Math.min(length, (b + 1) * blockSize) - g0;
    if (!within(blockMinC[b], blockMaxC[b], blockMaxS2[b])) {
      work.fill(0, a, e);
      continue;
    }
    for (let i = a; i < e; i++) {
      const g = g0 + i;
      const iv = 1 / (extraVar + s2[g]);
      const d = mu - c[g];
      const q = d * d * iv;
      const v = q > CUTOFF2 ? 0 : expNonPositive(-0.5 * q) * Math.sqrt(iv);
      work[i] = v;
      if (v > max) max = v;
    }
  }

  return finish(prepared, input, { work, from: 0, to: span, start: prepared.startCalBp + g0, max }, false);
}

interface Likelihood {
  work: Float64Array;
  from: number;
  to: number;
  start: number;
  max: number;
}

/**
 * Likelihood of the measured F given the curve's F (and its σ, propagated from the age σ) on
 * the whole grid; used only near background, where it is cheap enough not to need the index.
 */
function likelihoodInF14c(prepared: PreparedCurve, input: CalibrationInput): Likelihood {
  const { c, s2, length } = prepared;
  const dr = input.deltaR ?? 0;
  const drs2 = (input.deltaRError ?? 0) ** 2;
  const f = input.f14c!;
  const sf2 = input.f14cError! ** 2;
  if (scratch.length < length) scratch = new Float64Array(Math.max(length, scratch.length * 2));
  const work = scratch;
  let max = 0;
  for (let g = 0; g < length; g++) {
    const fc = ageToF(c[g] + dr);
    const sc = fc / LIBBY;
    const iv = 1 / (sf2 + sc * sc * (s2[g] + drs2));
    const d = f - fc;
    const q = d * d * iv;
    const v = q > CUTOFF2 ? 0 : expNonPositive(-0.5 * q) * Math.sqrt(iv);
    work[g] = v;
    if (v > max) max = v;
  }
  if (!(max > 0)) {
    throw new CalibrationError(
      `F¹⁴C ${f.toPrecision(3)} matches no part of ${input.curveLabel ?? prepared.name}.`,
      "beyond-curve",
    );
  }
  return { work, from: 0, to: length, start: prepared.startCalBp, max };
}

function finish(prepared: PreparedCurve, input: CalibrationInput, l: Likelihood, inF14cSpace: boolean): CalibrationResult {
  const { density, summary } = finishAndSummarise(l.work, l.from, l.to, l.start, l.max);
  const curveFirst = prepared.startCalBp;
  const curveLast = prepared.startCalBp + prepared.length - 1;
  const first = density.startCalBp;
  const last = first + density.values.length - 1;
  const atCurveLimit = first <= curveFirst || last >= curveLast;
  const name = input.curveLabel ?? prepared.name;
  const notes: string[] = [];
  for (const r of [...summary.hpd68, ...summary.hpd95]) {
    if (r.from >= curveLast || r.to <= curveFirst) r.atCurveLimit = true;
  }
  if (last >= curveLast) {
    notes.push(
      `The probability reaches the old end of ${name} (${fmt(curveLast)} cal BP) and is cut there: the date may be older than the ranges say.`,
    );
  }
  if (first <= curveFirst) {
    notes.push(
      `The probability reaches the young end of ${name} (${fmt(curveFirst)} cal BP) and is cut there: the date may be younger than the ranges say.`,
    );
  }
  if (inF14cSpace)
    notes.push("Near background: the likelihood was computed in F¹⁴C, where the measurement's error is symmetric.");
  return { ...summary, curveName: prepared.name, density, atCurveLimit, inF14cSpace, notes };
}

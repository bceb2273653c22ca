// Calibration of one radiocarbon age against a prepared curve (Bayes with a uniform prior on
// a 1-year calendar grid; Bronk Ramsey 2009). The likelihood follows CHECK_VALUES A4.

import { groupThousands } from "./calendar.ts";
import { SUPER_BLOCK, type PreparedCurve } from "./curve.ts";
import { expNonPositive } from "./fastexp.ts";
import { finishAndSummarise, type CalendarDensity, type DensitySummary } from "./density.ts";

export {
  normalDensity,
  summariseDensity,
  densityAt,
  HPD_68,
  HPD_95,
  DENSITY_TRIM,
  type CalendarDensity,
  type DensitySummary,
  type Range,
} from "./density.ts";

export interface CalibrationInput {
  /** Conventional radiocarbon age, 14C yr BP. */
  age: number;
  /** 1σ of the age, years. */
  error: number;
  /** Local marine reservoir offset against this curve, 14C yr. */
  deltaR?: number;
  deltaRError?: number;
}

export interface CalibrationResult extends DensitySummary {
  curveName: string;
  density: CalendarDensity;
  /** True when non-negligible probability reaches the first or last year of the curve. */
  atCurveLimit: boolean;
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

let scratch = new Float64Array(4096);

function fmt(x: number): string {
  return groupThousands(Math.round(x));
}

/**
 * The 14C ages, after ΔR, that the curve can calibrate: a measurement outside the curve's own
 * 14C range is refused rather than piled up against the curve's end.
 */
export function curveAgeLimits(prepared: PreparedCurve, deltaR = 0): { min: number; max: number } {
  return { min: prepared.minC14 + deltaR, max: prepared.maxC14 + deltaR };
}

export function calibrate(prepared: PreparedCurve, input: CalibrationInput): CalibrationResult {
  const { age, error } = input;
  const deltaR = input.deltaR ?? 0;
  const deltaRError = input.deltaRError ?? 0;
  if (!Number.isFinite(age)) throw new CalibrationError("The radiocarbon age must be a number.", "invalid-input");
  if (!(error > 0) || !Number.isFinite(error)) {
    throw new CalibrationError("The age error must be a positive number.", "invalid-input");
  }
  if (!Number.isFinite(deltaR)) throw new CalibrationError("ΔR must be a number.", "invalid-input");
  if (!(deltaRError >= 0) || !Number.isFinite(deltaRError)) {
    throw new CalibrationError("The ΔR error must be zero or more.", "invalid-input");
  }
  const mu = age - deltaR;
  if (mu < prepared.minC14 || mu > prepared.maxC14) {
    const lim = curveAgeLimits(prepared, deltaR);
    const last = prepared.startCalBp + prepared.length - 1;
    throw new CalibrationError(
      `${fmt(age)} 14C yr BP is beyond the curve: ${prepared.name} covers ${fmt(lim.min)}–${fmt(lim.max)} ` +
        `14C yr BP${deltaR !== 0 ? ` with ΔR ${fmt(deltaR)}` : ""} (${fmt(prepared.startCalBp)}–${fmt(last)} cal BP).`,
      "beyond-curve",
    );
  }
  const extraVar = error * error + deltaRError * deltaRError;
  const { blockSize, blockMinC, blockMaxC, blockMaxS2, superMinC, superMaxC, superMaxS2, c, s2, length } = prepared;
  const nBlocks = blockMinC.length;
  const nSuper = superMinC.length;

  // Squared distances avoid a square root per block.
  const within = (lo: number, hi: number, maxS2: number) => {
    const d = mu < lo ? lo - mu : mu > hi ? mu - hi : 0;
    return d * d <= CUTOFF2 * (extraVar + maxS2);
  };
  let bFirst = -1;
  let bLast = -1;
  for (let k = 0; k < nSuper; k++) {
    if (!within(superMinC[k], superMaxC[k], superMaxS2[k])) continue;
    const bEnd = Math.min(nBlocks, (k + 1) * SUPER_BLOCK);
    for (let b = k * SUPER_BLOCK; b < bEnd; b++) {
      if (within(blockMinC[b], blockMaxC[b], blockMaxS2[b])) {
        if (bFirst < 0) bFirst = b;
        bLast = b;
      }
    }
  }
  if (bFirst < 0) {
    // Only reachable if the curve has gaps in 14C coverage wider than the cutoff.
    throw new CalibrationError(`${fmt(age)} 14C yr BP matches no part of ${prepared.name}.`, "beyond-curve");
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

  const { density, summary } = finishAndSummarise(work, 0, span, prepared.startCalBp + g0, max);
  const first = density.startCalBp;
  const last = first + density.values.length - 1;
  return {
    ...summary,
    curveName: prepared.name,
    density,
    atCurveLimit: first <= prepared.startCalBp || last >= prepared.startCalBp + length - 1,
  };
}

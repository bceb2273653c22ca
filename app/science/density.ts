// Calendar-age densities on a 1-year grid and their summary (median, HPD ranges). Shared by
// radiocarbon calibration and luminescence ages so both are reported the same way.

export interface CalendarDensity {
  /** Calendar age (cal BP) of values[0], the youngest year kept. */
  startCalBp: number;
  /** Probability per calendar year, youngest first; sums to 1. */
  values: Float32Array;
}

/** A highest-density range: `from` is the older bound, `to` the younger (both cal BP). */
export interface Range {
  from: number;
  to: number;
  /** Probability that the calendar age lies in this range. */
  p: number;
  /** Set when the range is cut by the end of the curve it was calibrated on. */
  atCurveLimit?: boolean;
}

export interface DensitySummary {
  medianCalBp: number;
  meanCalBp: number;
  /** Ranges ordered from oldest. */
  hpd68: Range[];
  hpd95: Range[];
}

export const HPD_68 = 0.683;
export const HPD_95 = 0.954;
/** Values below this fraction of the peak are dropped from the ends of a stored density. */
export const DENSITY_TRIM = 1e-6;

const N_BUCKETS = 512;
const TOP = N_BUCKETS - 1;
/** Sum of the values falling in each of N_BUCKETS equal slices of [0, max]. */
const bucketSum = new Float64Array(N_BUCKETS);

function fillBuckets(values: Float32Array, scale: number): void {
  bucketSum.fill(0);
  for (let i = 0; i < values.length; i++) {
    const k = (values[i] * scale) | 0;
    bucketSum[k > TOP ? TOP : k] += values[i];
  }
}

/** A level of the HPD: every point above `t`, and `take` of the `tied` points exactly at `t`. */
interface Level {
  t: number;
  take: number;
  tied: number;
}

/**
 * The density levels of the 68.3 % and 95.4 % regions: the same result as sorting all points
 * from highest down and accumulating until the target is reached, but only the value bucket
 * where a target is crossed gets sorted. Expects bucketSum filled with the same `scale`; the
 * result does not depend on the scale, only the work does.
 */
function hpdLevels(values: Float32Array, scale: number, total: number): [Level, Level] {
  const target68 = HPD_68 * total;
  const target95 = HPD_95 * total;
  let cum = 0;
  let k = TOP;
  for (; k > 0; k--) {
    if (cum + bucketSum[k] >= target68) break;
    cum += bucketSum[k];
  }
  const k68 = k;
  const before68 = cum;
  for (; k > 0; k--) {
    if (cum + bucketSum[k] >= target95) break;
    cum += bucketSum[k];
  }
  const k95 = k;
  const before95 = cum;
  const m68: number[] = [];
  const m95: number[] = [];
  // Only values near or above the lower boundary bucket can belong to one; the half-bucket
  // margin keeps rounding in v·scale from excluding a member.
  const minValue = (k95 - 0.5) / scale;
  for (let i = 0; i < values.length; i++) {
    const v = values[i];
    if (v < minValue) continue;
    let kb = (v * scale) | 0;
    if (kb > TOP) kb = TOP;
    if (kb === k68) m68.push(v);
    if (kb === k95) m95.push(v);
  }
  return [crossing(m68, before68, target68), crossing(m95, before95, target95)];
}

function crossing(members: number[], before: number, target: number): Level {
  members.sort((a, b) => b - a);
  let c = before;
  for (let j = 0; j < members.length; j++) {
    const v = members[j];
    c += v;
    if (c >= target) {
      let first = j;
      while (first > 0 && members[first - 1] === v) first--;
      let last = j;
      while (last + 1 < members.length && members[last + 1] === v) last++;
      return { t: v, take: j - first + 1, tied: last - first + 1 };
    }
  }
  // Rounding can leave the target a hair out of reach; then every positive point is taken.
  const t = members.length ? members[members.length - 1] : Number.MIN_VALUE;
  return { t, take: Number.MAX_SAFE_INTEGER, tied: Number.MAX_SAFE_INTEGER };
}

/**
 * Which of the points tied at a level's value are taken when only some are needed: those
 * nearest to points already above the level (so a range grows at its edges rather than
 * splitting), then the younger. 1 = taken. The order depends only on the points strictly above
 * `t`, so when both levels fall on the same value the 68.3 % choice lies inside the 95.4 % one.
 */
function tieMask(values: Float32Array, level: Level): Uint8Array | null {
  if (level.take >= level.tied) return null;
  const n = values.length;
  const dist = new Float64Array(n).fill(Infinity);
  let lastAbove = -Infinity;
  for (let i = 0; i < n; i++) {
    if (values[i] > level.t) lastAbove = i;
    dist[i] = i - lastAbove;
  }
  lastAbove = Infinity;
  for (let i = n - 1; i >= 0; i--) {
    if (values[i] > level.t) lastAbove = i;
    dist[i] = Math.min(dist[i], lastAbove - i);
  }
  const tied: number[] = [];
  for (let i = 0; i < n; i++) if (values[i] === level.t) tied.push(i);
  tied.sort((a, b) => dist[a] - dist[b] || a - b);
  const mask = new Uint8Array(n);
  for (let j = 0; j < level.take; j++) mask[tied[j]] = 1;
  return mask;
}

function member(v: number, i: number, level: Level, mask: Uint8Array | null): boolean {
  if (!(v > 0)) return false;
  if (v > level.t) return true;
  return v === level.t && (mask === null || mask[i] === 1);
}

/**
 * Runs of grid points in each region (the 68.3 % one inside the 95.4 % one), and the median, in one pass.
 * The median treats each year's probability as spread evenly over that year.
 */
function rangesAndMedian(
  values: Float32Array,
  start: number,
  l68: Level,
  l95: Level,
  half: number,
): { r68: Range[]; r95: Range[]; median: number } {
  const mask68 = tieMask(values, l68);
  const mask95 = tieMask(values, l95);
  let cum = 0;
  let median = Number.NaN;
  const r68: Range[] = [];
  const r95: Range[] = [];
  const n = values.length;
  let open68 = -1;
  let open95 = -1;
  let p68 = 0;
  let p95 = 0;
  for (let i = 0; i <= n; i++) {
    const v = i < n ? values[i] : 0;
    if (median !== median && v > 0 && cum + v >= half) median = start + i - 0.5 + (half - cum) / v;
    cum += v;
    const in95 = i < n && member(v, i, l95, mask95);
    const in68 = in95 && member(v, i, l68, mask68);
    if (in95) {
      if (open95 < 0) {
        open95 = i;
        p95 = 0;
      }
      p95 += v;
    } else if (open95 >= 0) {
      r95.push({ from: start + i - 1, to: start + open95, p: p95 });
      open95 = -1;
    }
    if (in68) {
      if (open68 < 0) {
        open68 = i;
        p68 = 0;
      }
      p68 += v;
    } else if (open68 >= 0) {
      r68.push({ from: start + i - 1, to: start + open68, p: p68 });
      open68 = -1;
    }
  }
  if (median !== median) median = start + n - 1;
  return { r68: r68.reverse(), r95: r95.reverse(), median };
}

/**
 * Median, mean and 68.3 % / 95.4 % highest-density ranges of a grid density: the smallest set of
 * grid years whose probability reaches the level. Where several years tie at the level's value
 * (flat stretches of a curve produce exact ties) only as many are taken as the level needs, so
 * the mass does not overshoot; see tieMask for which. Range bounds are
 * grid years; the median treats each year's probability as spread evenly over that year, so
 * a symmetric density centred on a grid year has that year as its median.
 */
export function summariseDensity(density: CalendarDensity): DensitySummary {
  return summariseWithStats(density, densityStats(density.values));
}

interface DensityStats {
  total: number;
  max: number;
  /** Σ i·v_i, for the mean. */
  moment: number;
  /** Set when bucketSum was already filled with this scale. */
  scale?: number;
}

function densityStats(values: Float32Array): DensityStats {
  let total = 0;
  let max = 0;
  let moment = 0;
  for (let i = 0; i < values.length; i++) {
    const v = values[i];
    total += v;
    moment += i * v;
    if (v > max) max = v;
  }
  return { total, max, moment };
}

function summariseWithStats(density: CalendarDensity, stats: DensityStats): DensitySummary {
  const { values, startCalBp: start } = density;
  const { total, max, moment } = stats;
  if (!(total > 0)) throw new Error("The density is empty.");
  const scale = stats.scale ?? N_BUCKETS / max;
  if (stats.scale === undefined) fillBuckets(values, scale);
  const [l68, l95] = hpdLevels(values, scale, total);
  const { r68, r95, median } = rangesAndMedian(values, start, l68, l95, total / 2);
  return {
    medianCalBp: median,
    meanCalBp: start + moment / total,
    hpd68: scaleP(r68, total),
    hpd95: scaleP(r95, total),
  };
}

function scaleP(ranges: Range[], total: number): Range[] {
  for (const r of ranges) r.p /= total;
  return ranges;
}

/**
 * Turns unnormalised grid values into a stored density: drops negligible tails at both ends
 * and normalises what is left to sum to 1. `work[i]` belongs to calendar age `start + i`.
 */
export function finishDensity(work: ArrayLike<number>, from: number, to: number, start: number): CalendarDensity {
  let max = 0;
  for (let i = from; i < to; i++) if (work[i] > max) max = work[i];
  return finishAndSummarise(work, from, to, start, max).density;
}

/**
 * finishDensity followed by summariseDensity, sharing the pass that writes the stored values:
 * the summary is computed from the stored float32 values, so summariseDensity(density) gives
 * the same result (up to summation rounding at an exact tie with a target).
 */
export function finishAndSummarise(
  work: ArrayLike<number>,
  from: number,
  to: number,
  start: number,
  max: number,
): { density: CalendarDensity; summary: DensitySummary } {
  if (!(max > 0)) throw new Error("The density is zero everywhere.");
  const floor = max * DENSITY_TRIM;
  let a = from;
  while (work[a] < floor) a++;
  let b = to - 1;
  while (work[b] < floor) b--;
  let raw = 0;
  for (let i = a; i <= b; i++) raw += work[i];
  const values = new Float32Array(b - a + 1);
  const inv = 1 / raw;
  let total = 0;
  let vmax = 0;
  let moment = 0;
  // Buckets are filled here too, saving a pass; max·inv is the stored peak up to rounding,
  // which the top bucket's clamp absorbs.
  const scale = N_BUCKETS / (max * inv);
  bucketSum.fill(0);
  for (let i = a; i <= b; i++) {
    const v = Math.fround(work[i] * inv);
    const j = i - a;
    values[j] = v;
    total += v;
    moment += j * v;
    if (v > vmax) vmax = v;
    const k = (v * scale) | 0;
    bucketSum[k > TOP ? TOP : k] += v;
  }
  const density = { startCalBp: start + a, values };
  return { density, summary: summariseWithStats(density, { total, max: vmax, moment, scale }) };
}

/**
 * A normal distribution N(mean, sd²) on the 1-year grid: the calendar density of a
 * luminescence (or any Gaussian) age.
 */
export function normalDensity(meanCalBp: number, sdYears: number): CalendarDensity {
  if (!Number.isFinite(meanCalBp)) throw new Error("The mean must be a finite number.");
  if (!(sdYears > 0) || !Number.isFinite(sdYears)) throw new Error("The standard deviation must be positive.");
  const lo = Math.floor(meanCalBp - 6 * sdYears) - 1;
  const hi = Math.ceil(meanCalBp + 6 * sdYears) + 1;
  const work = new Float64Array(hi - lo + 1);
  const k = -0.5 / (sdYears * sdYears);
  for (let i = 0; i < work.length; i++) {
    const d = lo + i - meanCalBp;
    work[i] = Math.exp(k * d * d);
  }
  // A very narrow sd can put all the weight between grid points; keep the nearest year.
  let any = false;
  for (let i = 0; i < work.length; i++) if (work[i] > 0) any = true;
  if (!any) work[Math.round(meanCalBp) - lo] = 1;
  return finishDensity(work, 0, work.length, lo);
}

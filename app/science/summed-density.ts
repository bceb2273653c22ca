// The summed calendar density of a selection of determinations, overall and by reliability grade.
//
// Each determination's density sums to 1, so the summed density sums to the number of
// determinations that have one: a bin's value is the expected number of the selection's dates
// whose calendar age falls in that bin. It shows when the data cluster and how much they say; it
// is not a rate of deglaciation, and dates that are wrong still add their whole weight.

import type { CalendarDensity } from "#app/science/density.ts";

/** Grade keys in display order; "ungraded" collects determinations without a reviewer's grade. */
export const GRADE_KEYS = ["3", "2", "1", "0", "ungraded"] as const;
export type GradeKey = (typeof GRADE_KEYS)[number];

export interface GradedDensity {
  density: CalendarDensity;
  grade: number | null;
}

export interface SummedDensity {
  /** Calendar age (cal BP) of the young edge of bin 0; bin k covers [start + k·step, start + (k+1)·step). */
  startCalBp: number;
  /** Bin width in years. */
  step: number;
  /** Expected number of dates per bin, all grades together. */
  total: number[];
  /** The same per grade; the grades' bins add up to `total`. */
  byGrade: Record<GradeKey, number[]>;
  /** Determinations that contributed (those with a density). */
  count: number;
  countByGrade: Record<GradeKey, number>;
}

export function gradeKey(grade: number | null): GradeKey {
  return grade === 3 || grade === 2 || grade === 1 || grade === 0 ? (String(grade) as GradeKey) : "ungraded";
}

/** The youngest and oldest calendar years any of the densities covers, or null when there are none. */
export function densitySpan(items: readonly GradedDensity[]): { young: number; old: number } | null {
  let young = Infinity;
  let old = -Infinity;
  for (const { density } of items) {
    if (density.values.length === 0) continue;
    young = Math.min(young, density.startCalBp);
    old = Math.max(old, density.startCalBp + density.values.length - 1);
  }
  return Number.isFinite(young) ? { young, old } : null;
}

/**
 * Sums the densities into bins of `step` years starting at a multiple of `step`. With `range`
 * the bins cover only that window (cal BP, either order) and mass outside it is left out, so the
 * bins then sum to less than `count`. `normalise` divides by `count`, giving a density that sums
 * to 1 (over the whole span) — the shape without the amount.
 */
export function sumDensities(
  items: readonly GradedDensity[],
  options: { step?: number; range?: [number, number]; normalise?: boolean } = {},
): SummedDensity {
  const step = options.step ?? 10;
  if (!(Number.isInteger(step) && step >= 1)) throw new Error("The bin width must be a whole number of years ≥ 1.");
  const span = options.range ? { young: Math.min(...options.range), old: Math.max(...options.range) } : densitySpan(items);
  const start = span ? Math.floor(span.young / step) * step : 0;
  const bins = span ? Math.floor((span.old - start) / step) + 1 : 0;
  const byGrade = Object.fromEntries(GRADE_KEYS.map((k) => [k, new Array<number>(bins).fill(0)])) as Record<GradeKey, number[]>;
  const countByGrade = Object.fromEntries(GRADE_KEYS.map((k) => [k, 0])) as Record<GradeKey, number>;
  let count = 0;
  for (const { density, grade } of items) {
    if (density.values.length === 0) continue;
    const key = gradeKey(grade);
    const target = byGrade[key];
    count++;
    countByGrade[key]++;
    for (let i = 0; i < density.values.length; i++) {
      const k = Math.floor((density.startCalBp + i - start) / step);
      if (k >= 0 && k < bins) target[k] += density.values[i];
    }
  }
  if (options.normalise && count > 0) {
    for (const key of GRADE_KEYS) for (let k = 0; k < bins; k++) byGrade[key][k] /= count;
  }
  const total = new Array<number>(bins).fill(0);
  for (const key of GRADE_KEYS) for (let k = 0; k < bins; k++) total[k] += byGrade[key][k];
  return { startCalBp: start, step, total, byGrade, count, countByGrade };
}

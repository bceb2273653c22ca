// One constraint against one run: the raw score in [0, 1] and the one-sided implausibility.
//
// Minimum- and maximum-limiting dates both say the site was free of ice at the dated time, so
// their score is the probability, over the date's calendar density p(t), that the run has the
// site free of ice then: Σ_t p(t) · F(s, t).
//
// A direct date dates the deglaciation itself. Its score is the share of the density lying at
// or below the density found at the run's deglaciation time D(s), with the density first
// smoothed over the run's time step: a "highest-density p-value", 1 at the mode and falling to 0
// in the tails. For a normal density it equals 2 · Φ(−|D − μ| / σ), the two-sided tail beyond D.
//
// The part of a density lying outside the run's time span is scored with F = 1/2: the run says
// nothing there, and every run of an ensemble is then charged the same for what it does not
// cover, so their totals stay comparable (each constraint counts in every run).

import type { CalendarDensity } from "../density.ts";
import { deglaciation, historySpan, iceFreeAt, nearestIceFree, type Deglaciation, type SiteHistory } from "./ice-history.ts";

export type ScoredKind = "minimum" | "maximum" | "direct";

/** F assumed where the run has no slice: uninformative. */
export const OUTSIDE_SPAN_FREE = 0.5;

export interface DensityMoments {
  mean: number;
  sd: number;
}

/** Mean and standard deviation of a calendar density (cal BP). */
export function densityMoments(d: CalendarDensity): DensityMoments {
  let total = 0;
  let m1 = 0;
  for (let i = 0; i < d.values.length; i++) {
    total += d.values[i];
    m1 += d.values[i] * (d.startCalBp + i);
  }
  const mean = m1 / total;
  let m2 = 0;
  for (let i = 0; i < d.values.length; i++) m2 += d.values[i] * (d.startCalBp + i - mean) ** 2;
  return { mean, sd: Math.sqrt(m2 / total) };
}

/** Share of a density's mass inside the run's span. */
export function massInSpan(d: CalendarDensity, h: SiteHistory): number {
  const { oldest, youngest } = historySpan(h);
  let total = 0;
  let inside = 0;
  for (let i = 0; i < d.values.length; i++) {
    const t = d.startCalBp + i;
    total += d.values[i];
    if (t <= oldest && t >= youngest) inside += d.values[i];
  }
  return total > 0 ? inside / total : 0;
}

/** Σ_t p(t) · F(s, t) for a minimum- or maximum-limiting date. */
export function limitingScore(d: CalendarDensity, h: SiteHistory): number {
  let total = 0;
  let sum = 0;
  for (let i = 0; i < d.values.length; i++) {
    const f = iceFreeAt(h, d.startCalBp + i);
    total += d.values[i];
    sum += d.values[i] * (Number.isNaN(f) ? OUTSIDE_SPAN_FREE : f);
  }
  return total > 0 ? Math.min(1, Math.max(0, sum / total)) : 0;
}

/** Moving average of a density over `window` years (centred; at least one year). */
export function smoothDensity(d: CalendarDensity, window: number): Float64Array {
  const n = d.values.length;
  const half = Math.max(0, Math.floor(window / 2));
  const out = new Float64Array(n);
  const prefix = new Float64Array(n + 1);
  for (let i = 0; i < n; i++) prefix[i + 1] = prefix[i] + d.values[i];
  for (let i = 0; i < n; i++) {
    const lo = Math.max(0, i - half);
    const hi = Math.min(n, i + half + 1);
    out[i] = (prefix[hi] - prefix[lo]) / (2 * half + 1);
  }
  return out;
}

/** Highest-density p-value of a direct date at the run's deglaciation time. */
export function directScore(d: CalendarDensity, deglaciationCalBp: number, timeStepYears: number): number {
  const s = smoothDensity(d, timeStepYears);
  const k = Math.round(deglaciationCalBp - d.startCalBp);
  const at = k >= 0 && k < s.length ? s[k] : 0;
  let total = 0;
  let below = 0;
  for (let i = 0; i < s.length; i++) {
    total += s[i];
    if (s[i] <= at) below += s[i];
  }
  return total > 0 ? Math.min(1, below / total) : 0;
}

export interface ConstraintResult {
  /** Raw score in [0, 1], before ε and the grade weight. */
  score: number;
  /** One-sided implausibility: standard deviations on the wrong side; 0 on the right side. */
  implausibility: number;
  /** D(s) of the run at the site (cal BP). */
  modelDeglaciationCalBp: number;
  deglaciationState: Deglaciation["state"];
  /** Share of the density inside the run's span; below 0.05 the constraint is "outside the span". */
  inSpan: number;
}

export interface ScoreOptions {
  /** The run's typical time step (years): smooths direct dates and joins the implausibility's variance. */
  timeStepYears: number;
  /** A model-discrepancy standard deviation (years) added in quadrature to the date's; default 0. */
  discrepancyYears?: number;
}

/** Share of mass in the span below which a constraint is treated as outside the run. */
export const OUTSIDE_SPAN_SHARE = 0.05;

/**
 * Implausibility I = |z − E[f]| / √(Var_obs + Var_discrepancy + Var_step) on the wrong side only.
 * Limiting dates: the distance from the date's mean to the nearest time the run is free of ice
 * (0 when it is free then). Direct dates: the distance from the mean to D(s), both sides wrong.
 */
function implausibility(kind: ScoredKind, m: DensityMoments, h: SiteHistory, dCalBp: number, o: ScoreOptions): number {
  const sd = Math.sqrt(m.sd ** 2 + (o.discrepancyYears ?? 0) ** 2 + o.timeStepYears ** 2 / 12);
  if (kind === "direct") return Math.abs(dCalBp - m.mean) / sd;
  const nearest = nearestIceFree(h, m.mean);
  if (nearest === null) {
    const { oldest, youngest } = historySpan(h);
    return Math.max(Math.abs(m.mean - oldest), Math.abs(m.mean - youngest)) / sd;
  }
  return Math.abs(nearest - m.mean) / sd;
}

/** Scores one constraint (its calendar density and kind) against a site's history. */
export function scoreConstraint(kind: ScoredKind, d: CalendarDensity, h: SiteHistory, o: ScoreOptions): ConstraintResult {
  const degl = deglaciation(h);
  const inSpan = massInSpan(d, h);
  const m = densityMoments(d);
  if (inSpan < OUTSIDE_SPAN_SHARE) {
    // The run says nothing about this date: the same neutral contribution in every run.
    return {
      score: OUTSIDE_SPAN_FREE,
      implausibility: 0,
      modelDeglaciationCalBp: degl.calBp,
      deglaciationState: degl.state,
      inSpan,
    };
  }
  const score = kind === "direct" ? directScore(d, degl.calBp, o.timeStepYears) : limitingScore(d, h);
  return {
    score,
    implausibility: implausibility(kind, m, h, degl.calBp, o),
    modelDeglaciationCalBp: degl.calBp,
    deglaciationState: degl.state,
    inSpan,
  };
}

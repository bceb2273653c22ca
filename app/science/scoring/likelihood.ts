// A run's total: log L = Σ_i w_i · log(ε + (1 − ε) · score_i), with ε an outlier share so that
// one bad date cannot veto a run, and w_i from the reviewer's grade. Rejected dates never count.
// History matching: the largest and second-largest one-sided implausibilities, with the
// three-sigma cut-off (Pukelsheim 1994). With hundreds of constraints a few undetected bad dates
// always lie beyond 3, so the largest (or second-largest) alone would rule out every run. The
// rule used is the one the three-sigma cut-off comes from: for any unimodal distribution at
// most 4/81 of the mass lies beyond 3σ (Pukelsheim's inequality), so a run is ruled out when a
// larger share of its constraints is implausible beyond 3. With very few constraints this is the
// same as asking the second-largest to stay below 3 (one bad date is tolerated).

/** Weight per reliability grade: 3 secure, 2 usable, 1 doubtful, 0 rejected (never counts). */
export const GRADE_WEIGHTS: Readonly<Record<0 | 1 | 2 | 3, number>> = { 3: 1, 2: 0.75, 1: 0.25, 0: 0 };
/** Weight of a determination not yet graded, when a filter lets one in. */
export const UNGRADED_WEIGHT = 0.5;
export const DEFAULT_EPSILON = 0.05;
export const IMPLAUSIBILITY_CUTOFF = 3;
/** Pukelsheim's bound on the share of a unimodal distribution beyond three standard deviations. */
export const UNIMODAL_TAIL_SHARE = 4 / 81;

export function gradeWeight(grade: number | null): number {
  if (grade === null) return UNGRADED_WEIGHT;
  return GRADE_WEIGHTS[grade as 0 | 1 | 2 | 3] ?? 0;
}

/** One constraint's contribution w · log(ε + (1 − ε) · score). */
export function logLikelihoodTerm(score: number, weight: number, epsilon = DEFAULT_EPSILON): number {
  if (!(epsilon > 0 && epsilon < 1)) throw new Error("ε must lie strictly between 0 and 1.");
  return weight * Math.log(epsilon + (1 - epsilon) * Math.min(1, Math.max(0, score)));
}

export interface ScoredConstraint {
  score: number;
  implausibility: number;
  grade: number | null;
}

export interface RunTotals {
  logLikelihood: number;
  /** Constraints that counted (weight above 0). */
  nConstraints: number;
  /** Share of counted constraints with score ≥ 0.5. */
  shareAgreeing: number;
  maxImplausibility: number;
  secondImplausibility: number;
  /** Constraints with implausibility above the cut-off. */
  nImplausible: number;
  ruledOut: boolean;
}

export function runTotals(items: readonly ScoredConstraint[], epsilon = DEFAULT_EPSILON): RunTotals {
  let logL = 0;
  let n = 0;
  let agreeing = 0;
  let first = 0;
  let second = 0;
  let nImplausible = 0;
  for (const c of items) {
    const w = gradeWeight(c.grade);
    if (w <= 0) continue;
    n++;
    logL += logLikelihoodTerm(c.score, w, epsilon);
    if (c.score >= 0.5) agreeing++;
    if (c.implausibility > IMPLAUSIBILITY_CUTOFF) nImplausible++;
    if (c.implausibility > first) {
      second = first;
      first = c.implausibility;
    } else if (c.implausibility > second) second = c.implausibility;
  }
  return {
    logLikelihood: logL,
    nConstraints: n,
    shareAgreeing: n > 0 ? agreeing / n : 0,
    maxImplausibility: first,
    secondImplausibility: second,
    nImplausible,
    ruledOut: nImplausible > Math.max(1, UNIMODAL_TAIL_SHARE * n),
  };
}

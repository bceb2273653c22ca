// A site's ice cover through a model run: the ice-free share F(s, t) at each of the run's time
// slices, read between slices by linear interpolation, and the times derived from it.

/** Share of ice-free ground at and around one site, at each time slice of a run. */
export interface SiteHistory {
  /** Slice ages (cal BP), oldest first (chronological order), strictly decreasing. */
  ages: Float64Array;
  /** F at each slice, in [0, 1]: 1 = all ice-free, 0 = all ice. */
  free: Float32Array;
}

/** F counts as ice-free from this share up (the midpoint of a graded margin). */
export const ICE_FREE_LEVEL = 0.5;

/** Builds a history, sorting the slices chronologically; ages must be distinct. */
export function siteHistory(ages: ArrayLike<number>, free: ArrayLike<number>): SiteHistory {
  if (ages.length !== free.length) throw new Error("A history needs one ice-free share per time slice.");
  const order = Array.from({ length: ages.length }, (_, i) => i).sort((a, b) => ages[b] - ages[a]);
  const out: SiteHistory = { ages: new Float64Array(ages.length), free: new Float32Array(ages.length) };
  order.forEach((k, i) => {
    out.ages[i] = ages[k];
    out.free[i] = Math.min(1, Math.max(0, free[k]));
    if (i > 0 && out.ages[i] === out.ages[i - 1]) throw new Error(`Two time slices at ${ages[k]} cal BP.`);
  });
  return out;
}

/** The run's span: the oldest and youngest slice ages. */
export function historySpan(h: SiteHistory): { oldest: number; youngest: number } {
  return { oldest: h.ages[0], youngest: h.ages[h.ages.length - 1] };
}

/** F(s, t) interpolated linearly between slices; NaN outside the run's span. */
export function iceFreeAt(h: SiteHistory, calBp: number): number {
  const n = h.ages.length;
  if (n === 0 || calBp > h.ages[0] || calBp < h.ages[n - 1]) return Number.NaN;
  if (n === 1) return h.free[0];
  let lo = 0;
  let hi = n - 1;
  while (hi - lo > 1) {
    const mid = (lo + hi) >> 1;
    if (h.ages[mid] >= calBp) lo = mid;
    else hi = mid;
  }
  const span = h.ages[lo] - h.ages[hi];
  const w = (h.ages[lo] - calBp) / span;
  return h.free[lo] + w * (h.free[hi] - h.free[lo]);
}

/** Age at which the interpolated F crosses the ice-free level between slices i and i + 1. */
function crossing(h: SiteHistory, i: number): number {
  const a = h.free[i];
  const b = h.free[i + 1];
  const w = (ICE_FREE_LEVEL - a) / (b - a);
  return h.ages[i] - w * (h.ages[i] - h.ages[i + 1]);
}

export interface Deglaciation {
  /** D(s): age of the last change from ice to ice-free (cal BP). */
  calBp: number;
  /**
   * "in-span": a change seen inside the run; "ice-free-throughout": never under ice in the span
   * (D reported as the span's oldest age, a lower bound on the truth); "ice-throughout": never
   * free of ice (D reported as the youngest age, an upper bound); "re-glaciated": ice-free once
   * but under ice at the end (D is the last change to ice-free, before the final advance).
   */
  state: "in-span" | "ice-free-throughout" | "ice-throughout" | "re-glaciated";
}

/** D(s), the last change from ice to ice-free, found where F crosses ICE_FREE_LEVEL. */
export function deglaciation(h: SiteHistory): Deglaciation {
  const n = h.ages.length;
  let last = -1;
  let everIce = false;
  let everFree = false;
  for (let i = 0; i < n; i++) {
    if (h.free[i] >= ICE_FREE_LEVEL) everFree = true;
    else everIce = true;
    if (i < n - 1 && h.free[i] < ICE_FREE_LEVEL && h.free[i + 1] >= ICE_FREE_LEVEL) last = i;
  }
  if (!everIce) return { calBp: h.ages[0], state: "ice-free-throughout" };
  if (!everFree) return { calBp: h.ages[n - 1], state: "ice-throughout" };
  if (last < 0) return { calBp: h.ages[0], state: "re-glaciated" };
  const state = h.free[n - 1] >= ICE_FREE_LEVEL ? "in-span" : "re-glaciated";
  return { calBp: crossing(h, last), state };
}

/**
 * The age nearest to `calBp` at which the run is free of ice at the site (F ≥ ICE_FREE_LEVEL),
 * interpolating the crossings; null when the run is never free of ice there.
 */
export function nearestIceFree(h: SiteHistory, calBp: number): number | null {
  const n = h.ages.length;
  const at = iceFreeAt(h, calBp);
  if (at >= ICE_FREE_LEVEL) return calBp;
  let best: number | null = null;
  const consider = (age: number) => {
    if (best === null || Math.abs(age - calBp) < Math.abs(best - calBp)) best = age;
  };
  for (let i = 0; i < n; i++) {
    const free = h.free[i] >= ICE_FREE_LEVEL;
    if (free && (i === 0 || i === n - 1)) consider(h.ages[i]);
    if (i < n - 1 && free !== h.free[i + 1] >= ICE_FREE_LEVEL) consider(crossing(h, i));
  }
  return best;
}

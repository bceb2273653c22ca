// Scores one model run (a NetCDF grid or GeoJSON margins) against a list of constraints: reads
// the run slice by slice into each distinct site's ice-free history, then hands the histories
// to the pure scoring in app/science/scoring. The same code serves the web job, the API and
// the command-line scorer.

import type { CalendarDensity } from "#app/science/density.ts";
import { scoreConstraint, OUTSIDE_SPAN_SHARE, type ScoredKind } from "#app/science/scoring/constraint-score.ts";
import { cellsWithin, iceFreeShare, isIce } from "#app/science/scoring/grid.ts";
import { siteHistory, type SiteHistory } from "#app/science/scoring/ice-history.ts";
import { runTotals, DEFAULT_EPSILON, type RunTotals } from "#app/science/scoring/likelihood.ts";
import type { GridRun } from "./cf-grid.server.ts";
import { ModelRunFileError } from "./errors.ts";
import { gridMargin, marginSlices, polygonsMargin, type MarginOutline } from "./margin-outline.ts";
import { samplePoints, underIce, type MarginsRun } from "./margins-run.ts";

export interface ScoringConstraint {
  determinationId: number;
  latitude: number;
  longitude: number;
  kind: ScoredKind;
  grade: number | null;
  density: CalendarDensity;
}

export interface ScoringSettings {
  /** Outlier share ε; default 0.05. */
  epsilon?: number;
  /** Grid runs: radius in grid cells (default 1). Margins: radius in km (default 0, the point). */
  tolerance?: number;
  /** Model-discrepancy σ in years added to each date's in the implausibility; default 0. */
  discrepancyYears?: number;
}

export interface ConstraintScore {
  determinationId: number;
  score: number;
  implausibility: number;
  modelDeglaciationCalBp: number;
  /** False when the date lies outside the run's time span (scored as uninformative). */
  inSpan: boolean;
}

export interface RunScore {
  scores: ConstraintScore[];
  totals: RunTotals;
  /** Constraints off the run's domain (not counted). */
  nOffDomain: number;
  nOutsideSpan: number;
  spanCalBp: { oldest: number; youngest: number };
  timeStepYears: number;
  settings: Required<ScoringSettings>;
  /** The ice margin at up to MAX_MARGIN_SLICES slices, for the run page's map (when asked for). */
  margins: MarginOutline[];
}

export interface ScoreOptions {
  /** Called after each time slice read. */
  progress?: Progress;
  /** Also outline the ice margin (bounded; see margin-outline.ts). */
  margins?: boolean;
}

type Progress = (done: number, total: number) => void;

interface Site {
  lon: number;
  lat: number;
}

function distinctSites(constraints: readonly ScoringConstraint[]): { sites: Site[]; index: number[] } {
  const keys = new Map<string, number>();
  const sites: Site[] = [];
  const index = constraints.map((c) => {
    const key = `${c.longitude.toFixed(6)},${c.latitude.toFixed(6)}`;
    let i = keys.get(key);
    if (i === undefined) {
      i = sites.length;
      keys.set(key, i);
      sites.push({ lon: c.longitude, lat: c.latitude });
    }
    return i;
  });
  return { sites, index };
}

// Scoring yields to the event loop this often, so a server scoring in the background keeps answering.
const YIELD_MS = 40;
const nextTick = () => new Promise<void>((resolve) => setImmediate(resolve));

/** F at every site for every slice of a grid run, reading one slice at a time. */
async function gridHistories(
  run: GridRun,
  sites: Site[],
  tolerance: number,
  o: ScoreOptions,
  margins: MarginOutline[],
): Promise<(SiteHistory | null)[]> {
  const cells = sites.map((s) => {
    const [x, y] = run.toGrid(s.lon, s.lat);
    return Number.isFinite(x) && Number.isFinite(y) ? cellsWithin(run.xs, run.ys, x, y, tolerance) : [];
  });
  const n = run.slicesCalBp.length;
  const free = sites.map(() => new Float32Array(n));
  const outlined = o.margins ? marginSlices(n) : new Set<number>();
  let last = performance.now();
  for (let k = 0; k < n; k++) {
    const slice = run.readSlice(k);
    for (let i = 0; i < sites.length; i++) if (cells[i].length) free[i][k] = iceFreeShare(slice, cells[i], run.iceRule);
    if (outlined.has(k))
      margins.push({ calBp: run.slicesCalBp[k], coordinates: gridMargin(slice, run, (v) => isIce(v, run.iceRule)) });
    o.progress?.(k + 1, n);
    if (performance.now() - last > YIELD_MS) {
      await nextTick();
      last = performance.now();
    }
  }
  return sites.map((_, i) => (cells[i].length ? siteHistory(run.slicesCalBp, free[i]) : null));
}

async function marginHistories(
  run: MarginsRun,
  sites: Site[],
  toleranceKm: number,
  o: ScoreOptions,
  margins: MarginOutline[],
): Promise<SiteHistory[]> {
  const ages = run.slices.map((s) => s.calBp);
  const points = sites.map((s) => samplePoints(s.lon, s.lat, toleranceKm));
  const free = sites.map(() => new Float32Array(ages.length));
  const outlined = o.margins ? marginSlices(ages.length) : new Set<number>();
  let last = performance.now();
  for (const [k, slice] of run.slices.entries()) {
    points.forEach((pts, i) => {
      let f = 0;
      for (const [lon, lat] of pts) if (!underIce(slice, lon, lat)) f++;
      free[i][k] = f / pts.length;
    });
    if (outlined.has(k)) margins.push({ calBp: slice.calBp, coordinates: polygonsMargin(slice.polygons.map((p) => p.geometry)) });
    o.progress?.(k + 1, ages.length);
    if (performance.now() - last > YIELD_MS) {
      await nextTick();
      last = performance.now();
    }
  }
  return sites.map((_, i) => siteHistory(ages, free[i]));
}

function medianStep(agesDesc: Float64Array): number {
  const steps: number[] = [];
  for (let i = 1; i < agesDesc.length; i++) steps.push(agesDesc[i - 1] - agesDesc[i]);
  if (!steps.length) return 1;
  steps.sort((a, b) => a - b);
  return Math.max(1, steps[Math.floor(steps.length / 2)]);
}

/** Scores a run; rejects with ModelRunFileError "no-overlap" when no constraint falls in its domain and span. */
export async function scoreRun(
  run: GridRun | MarginsRun,
  constraints: readonly ScoringConstraint[],
  settings: ScoringSettings = {},
  options: ScoreOptions = {},
): Promise<RunScore> {
  const s: Required<ScoringSettings> = {
    epsilon: settings.epsilon ?? DEFAULT_EPSILON,
    tolerance: settings.tolerance ?? (run.kind === "grid" ? 1 : 0),
    discrepancyYears: settings.discrepancyYears ?? 0,
  };
  const { sites, index } = distinctSites(constraints);
  const margins: MarginOutline[] = [];
  const histories =
    run.kind === "grid"
      ? await gridHistories(run, sites, s.tolerance, options, margins)
      : await marginHistories(run, sites, s.tolerance, options, margins);
  const any = histories.find((h) => h !== null);
  if (!any)
    throw new ModelRunFileError(
      "no-overlap",
      "None of the constraints lies inside the run's grid: check the coordinates or the projection.",
    );
  const timeStepYears = medianStep(any.ages);
  const scores: ConstraintScore[] = [];
  const counted: { score: number; implausibility: number; grade: number | null }[] = [];
  let nOff = 0;
  let nOutside = 0;
  constraints.forEach((c, i) => {
    const h = histories[index[i]];
    if (!h) {
      nOff++;
      return;
    }
    const r = scoreConstraint(c.kind, c.density, h, { timeStepYears, discrepancyYears: s.discrepancyYears });
    const inSpan = r.inSpan >= OUTSIDE_SPAN_SHARE;
    if (!inSpan) nOutside++;
    scores.push({
      determinationId: c.determinationId,
      score: r.score,
      implausibility: r.implausibility,
      modelDeglaciationCalBp: r.modelDeglaciationCalBp,
      inSpan,
    });
    counted.push({ score: r.score, implausibility: r.implausibility, grade: c.grade });
  });
  if (scores.length === nOutside) {
    throw new ModelRunFileError(
      "no-overlap",
      `The run's times (${Math.round(any.ages[any.ages.length - 1])}–${Math.round(any.ages[0])} cal BP) do not overlap the constraints' calendar ages.`,
    );
  }
  return {
    scores,
    totals: runTotals(counted, s.epsilon),
    nOffDomain: nOff,
    nOutsideSpan: nOutside,
    spanCalBp: { oldest: any.ages[0], youngest: any.ages[any.ages.length - 1] },
    timeStepYears,
    settings: s,
    margins,
  };
}

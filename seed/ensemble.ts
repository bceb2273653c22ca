// The demo ensemble: ten synthetic model runs of the demo ice cap with two invented parameters,
// one of them (sliding 1.0, ocean melt 1.0) following the scenario's true history. Each run
// spans the whole cycle, from ice-free ground before the advance through full cover to the end
// of the retreat, so maximum-limiting dates (material overridden by the advance) can catch a
// run that comes too early and minimum-limiting dates one that comes too late.
//
// A run's history is the true one shifted in time by a local bias b(θ) = b1 + b2 · cos θ (θ the
// direction from the dome, east = 0): at age t the run shows the true ice of age t − b, so a
// positive b advances and frees the ground earlier. The invented parameters set the shifts:
//   sliding_factor    → b1 = 750 · (sliding − 1) years, the whole cap early (faster flow) or late;
//   ocean_melt_factor → b2 = 400 · (melt − 1) years, the Labrador Sea side early and the
//                       Ungava side late (more ocean melt), or the reverse.
// Everything here is invented.

import { cycleProgressAt, levelAt, toLocalKm, type RetreatParams } from "./retreat.ts";

export interface EnsembleMember {
  name: string;
  description: string;
  parameters: { sliding_factor: number; ocean_melt_factor: number };
}

export const DEMO_ENSEMBLE_NAME = "demo-ensemble";

const member = (name: string, sliding: number, melt: number, description: string): EnsembleMember => ({
  name,
  description,
  parameters: { sliding_factor: sliding, ocean_melt_factor: melt },
});

export const DEMO_ENSEMBLE: readonly EnsembleMember[] = [
  member("demo-run-01", 1.0, 1.0, "Follows the true history of the demo scenario."),
  member("demo-run-02", 1.4, 1.0, "Fast sliding: the whole cycle 300 years early."),
  member("demo-run-03", 0.6, 1.0, "Slow sliding: the whole cycle 300 years late."),
  member("demo-run-04", 0.0667, 1.0, "Very slow sliding: 700 years late."),
  member("demo-run-05", 1.0, 1.75, "Strong ocean melt: the east 300 years early, the west 300 years late."),
  member("demo-run-06", 1.0, 0.25, "Weak ocean melt: the east 300 years late, the west 300 years early."),
  member("demo-run-07", 1.2, 0.5, "Faster sliding, weaker melt."),
  member("demo-run-08", 0.8, 1.5, "Slower sliding, stronger melt."),
  member("demo-run-09", 1.27, 1.6, "Faster sliding, stronger melt."),
  member("demo-run-10", 0.73, 0.4, "Slower sliding, weaker melt."),
];

export function memberBias(m: EnsembleMember): { b1: number; b2: number } {
  return { b1: 750 * (m.parameters.sliding_factor - 1), b2: 400 * (m.parameters.ocean_melt_factor - 1) };
}

/** Slice ages of every demo run: before the advance to after the retreat, every 100 years. */
export const ENSEMBLE_OLDEST_CAL_BP = 18000;
export const ENSEMBLE_YOUNGEST_CAL_BP = 6000;
export const ENSEMBLE_STEP_YEARS = 100;

export function ensembleAges(): number[] {
  const out: number[] = [];
  for (let a = ENSEMBLE_OLDEST_CAL_BP; a >= ENSEMBLE_YOUNGEST_CAL_BP; a -= ENSEMBLE_STEP_YEARS) out.push(a);
  return out;
}

/** What a point needs for the run's ice at any age: its level, distance and direction. */
export interface PointGeometry {
  level: number | null;
  theta: number;
  distanceKm: number;
}

export function pointGeometry(p: RetreatParams, lon: number, lat: number): PointGeometry {
  const { x, y } = toLocalKm(p, lon, lat);
  return { level: levelAt(p, lon, lat), theta: Math.atan2(y, x), distanceKm: Math.hypot(x, y) };
}

/** Ice thickness (m) of a run at a point and age: a parabolic dome inside the shifted margin. */
export function runThicknessM(p: RetreatParams, bias: { b1: number; b2: number }, g: PointGeometry, calBp: number): number {
  if (g.level === null) return 0;
  const b = bias.b1 + bias.b2 * Math.cos(g.theta);
  const u = cycleProgressAt(p, calBp - b);
  if (u <= g.level || u <= 0) return 0;
  // thickest at the dome, thinning towards the margin
  return Math.round(2400 * Math.sqrt(1 - g.level / u) + 50);
}

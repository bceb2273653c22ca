// The demo's margin reconstruction: what an expert compilation of the demo ice cap might look
// like. It is drawn from the scenario's true retreat with a smooth age error of a few hundred
// years (varying around the margin and slowly through time), so the reconstruction check is
// tested against something that is not the truth; its stated uncertainty goes with it.

import type { Feature, Polygon } from "geojson";
import { deriveSeed, Rng } from "./random.ts";
import {
  fromLocalKm,
  isochroneAges,
  marginRadiusKm,
  progressAt,
  type IsochroneCollection,
  type RetreatParams,
} from "./retreat.ts";

/** The uncertainty the demo reconstruction states for its isochrone ages (1σ, years). */
export const DEMO_RECONSTRUCTION_UNCERTAINTY_YR = 300;
/** Standard deviation of the error actually drawn (years): close to, not equal to, the stated one. */
const ERROR_SD_YR = 250;
const VERTICES = 180;

export interface DemoReconstruction {
  uncertaintyYr: number;
  isochrones: IsochroneCollection;
  /** The drawn error at a direction θ (radians) and age, years; positive = reconstruction too old. */
  errorAt: (theta: number, calBp: number) => number;
}

interface Term {
  k: number;
  phase: number;
  amplitude: number;
  /** Slow change through time: cycles per 10,000 years and a phase. */
  timeFreq: number;
  timePhase: number;
}

export function demoReconstruction(retreat: RetreatParams, seed: number): DemoReconstruction {
  const rng = new Rng(deriveSeed(seed, "demo-reconstruction"));
  // A sum of low harmonics around the margin with random phases; amplitudes fall with k so the
  // error is smooth over a few hundred km, and each term drifts slowly with age.
  const raw: Term[] = [0, 1, 2, 3, 4, 5].map((k) => ({
    k,
    phase: rng.uniform(0, 2 * Math.PI),
    amplitude: rng.normal(0, 1) / (1 + k * 0.6),
    timeFreq: rng.uniform(0.3, 1.2),
    timePhase: rng.uniform(0, 2 * Math.PI),
  }));
  // E[cos²] = ½ for each term (the k = 0 term varies with time only, also ½ on average).
  const variance = raw.reduce((s, t) => s + (t.amplitude * t.amplitude) / 2, 0);
  const scale = ERROR_SD_YR / Math.sqrt(variance);
  const errorAt = (theta: number, calBp: number) => {
    let e = 0;
    for (const t of raw)
      e += t.amplitude * Math.cos(t.k * theta + t.phase) * Math.cos((2 * Math.PI * t.timeFreq * calBp) / 10000 + t.timePhase);
    return e * scale;
  };
  const features: Feature<Polygon, { age_cal_bp: number; age_uncertainty_yr: number }>[] = [];
  for (const age of isochroneAges(retreat)) {
    const coords: [number, number][] = [];
    for (let i = 0; i < VERTICES; i++) {
      const theta = (2 * Math.PI * i) / VERTICES;
      // The line labelled `age` is drawn where the true margin stood at age − error.
      const trueAge = Math.min(retreat.startCalBp, age - errorAt(theta, age));
      const r = progressAt(retreat, trueAge) <= 0 ? 0 : marginRadiusKm(retreat, theta, trueAge);
      coords.push(fromLocalKm(retreat, r * Math.cos(theta), r * Math.sin(theta)));
    }
    if (coords.every(([x, y]) => x === coords[0][0] && y === coords[0][1])) continue;
    coords.push([coords[0][0], coords[0][1]]);
    features.push({
      type: "Feature",
      properties: { age_cal_bp: age, age_uncertainty_yr: DEMO_RECONSTRUCTION_UNCERTAINTY_YR },
      geometry: { type: "Polygon", coordinates: [coords] },
    });
  }
  return {
    uncertaintyYr: DEMO_RECONSTRUCTION_UNCERTAINTY_YR,
    isochrones: { type: "FeatureCollection", features } as IsochroneCollection,
    errorAt,
  };
}

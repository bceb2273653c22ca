// The demo ice cap's retreat history: a margin that shrinks from the shelf towards a last
// remnant dome, described by a few numbers so that the isochrones, the true deglaciation age of
// any point and the synthetic model runs all come from one definition.
//
// Geometry: positions are projected onto a local equirectangular plane (km) centred on the dome.
// In direction θ the margin lies at r(θ, t) = R0(θ) · u(t)^p(θ), where u(t) is the retreat
// progress (1 at the start, 0 when the last ice melts; piecewise linear and increasing with age)
// and p(θ) lets some sectors retreat early and others late. r grows with age in every direction,
// so the isochrones are nested and a point's deglaciation age is found by inverting r.

import type { Feature, FeatureCollection, Polygon } from "geojson";
import { deriveSeed, Rng } from "./random.ts";

export interface Harmonic {
  k: number;
  amplitude: number;
  phase: number;
}

export interface RetreatParams {
  centreLon: number;
  centreLat: number;
  /** Age of the oldest isochrone (full ice cover), cal BP. */
  startCalBp: number;
  /** Age at which the last remnant disappears, cal BP. */
  endCalBp: number;
  baseRadiusKm: number;
  /** Shape of the full cover: R0(θ) = base · (1 + Σ a cos(kθ + φ)). */
  radiusHarmonics: Harmonic[];
  /** Sector timing: p(θ) = exp(Σ a cos(kθ + φ)). */
  exponentHarmonics: Harmonic[];
  /** Retreat progress u at given ages, ascending in age, u from 0 to 1. */
  progressKnots: { calBp: number; u: number }[];
}

export type IsochroneCollection = FeatureCollection<Polygon, { age_cal_bp: number }>;

const KM_PER_DEG_LAT = 110.574;
const KM_PER_DEG_LON_EQUATOR = 111.32;

/** Isochrone spacing, years. */
export const ISOCHRONE_STEP_YEARS = 250;
/** Vertices per isochrone ring; enough that a ring differs from the smooth margin by < 0.1 km. */
const RING_VERTICES = 180;

/** The retreat history for a seed. It depends on the seed alone (not on land or curves). */
export function retreatParams(seed: number): RetreatParams {
  const rng = new Rng(deriveSeed(seed, "retreat"));
  const harmonics = (amps: number[]): Harmonic[] =>
    amps.map((a, i) => ({ k: i + 1, amplitude: a * rng.uniform(0.6, 1.2), phase: rng.uniform(0, 2 * Math.PI) }));
  return {
    centreLon: -66.2 + rng.uniform(-0.3, 0.3),
    centreLat: 56.6 + rng.uniform(-0.15, 0.15),
    startCalBp: 14000,
    endCalBp: 6800,
    baseRadiusKm: rng.uniform(580, 620),
    radiusHarmonics: harmonics([0.06, 0.05, 0.035, 0.025]),
    exponentHarmonics: harmonics([0.16, 0.12, 0.07]),
    // Fast collapse from the shelf, a slow-down about 12.9–11.7 ka, then steady retreat inland.
    progressKnots: [
      { calBp: 6800, u: 0 },
      { calBp: 8000, u: 0.2 },
      { calBp: 9500, u: 0.42 },
      { calBp: 11000, u: 0.58 },
      { calBp: 11700, u: 0.62 },
      { calBp: 12900, u: 0.66 },
      { calBp: 14000, u: 1 },
    ],
  };
}

function kmPerDegLon(p: RetreatParams): number {
  return KM_PER_DEG_LON_EQUATOR * Math.cos((p.centreLat * Math.PI) / 180);
}

export function toLocalKm(p: RetreatParams, lon: number, lat: number): { x: number; y: number } {
  return { x: (lon - p.centreLon) * kmPerDegLon(p), y: (lat - p.centreLat) * KM_PER_DEG_LAT };
}

export function fromLocalKm(p: RetreatParams, x: number, y: number): [number, number] {
  return [p.centreLon + x / kmPerDegLon(p), p.centreLat + y / KM_PER_DEG_LAT];
}

function series(hs: Harmonic[], theta: number): number {
  let s = 0;
  for (const h of hs) s += h.amplitude * Math.cos(h.k * theta + h.phase);
  return s;
}

/** Radius of the full ice cover in direction θ (radians from east, counter-clockwise), km. */
export function fullCoverRadiusKm(p: RetreatParams, theta: number): number {
  return p.baseRadiusKm * (1 + series(p.radiusHarmonics, theta));
}

function exponent(p: RetreatParams, theta: number): number {
  return Math.exp(series(p.exponentHarmonics, theta));
}

/** Retreat progress at an age (clamped to 0…1). */
export function progressAt(p: RetreatParams, calBp: number): number {
  const k = p.progressKnots;
  if (calBp <= k[0].calBp) return 0;
  if (calBp >= k[k.length - 1].calBp) return 1;
  for (let i = 1; i < k.length; i++) {
    if (calBp <= k[i].calBp) {
      const t = (calBp - k[i - 1].calBp) / (k[i].calBp - k[i - 1].calBp);
      return k[i - 1].u + t * (k[i].u - k[i - 1].u);
    }
  }
  return 1;
}

function ageAtProgress(p: RetreatParams, u: number): number {
  const k = p.progressKnots;
  if (u <= 0) return k[0].calBp;
  for (let i = 1; i < k.length; i++) {
    if (u <= k[i].u) {
      const t = (u - k[i - 1].u) / (k[i].u - k[i - 1].u);
      return k[i - 1].calBp + t * (k[i].calBp - k[i - 1].calBp);
    }
  }
  return k[k.length - 1].calBp;
}

/** Distance from the dome centre to the margin in direction θ at an age, km. */
export function marginRadiusKm(p: RetreatParams, theta: number, calBp: number): number {
  const u = progressAt(p, calBp);
  if (u <= 0) return 0;
  return fullCoverRadiusKm(p, theta) * Math.pow(u, exponent(p, theta));
}

/**
 * Years the ice took to advance before the retreat: the margin grows from the dome at
 * startCalBp + ADVANCE_YEARS to the full cover at startCalBp, through the same shapes as the
 * retreat in reverse, so the centre is overridden first and the outer margin last.
 */
export const ADVANCE_YEARS = 2000;

/** Progress through the whole cycle: 0 before the advance, 1 at full cover, 0 after the retreat. */
export function cycleProgressAt(p: RetreatParams, calBp: number): number {
  if (calBp <= p.startCalBp) return progressAt(p, calBp);
  return Math.max(0, 1 - (calBp - p.startCalBp) / ADVANCE_YEARS);
}

/** Progress level u at which the margin passes a point (0 at the dome), or null outside the full cover. */
export function levelAt(p: RetreatParams, lon: number, lat: number): number | null {
  const { x, y } = toLocalKm(p, lon, lat);
  const d = Math.hypot(x, y);
  if (d === 0) return 0;
  const theta = Math.atan2(y, x);
  const r0 = fullCoverRadiusKm(p, theta);
  if (d >= r0) return null;
  return Math.pow(d / r0, 1 / exponent(p, theta));
}

/** The age (cal BP) at which the advancing ice overrode this point, or null outside the full cover. */
export function trueAdvanceAge(p: RetreatParams, lon: number, lat: number): number | null {
  const u = levelAt(p, lon, lat);
  return u === null ? null : p.startCalBp + ADVANCE_YEARS * (1 - u);
}

/**
 * The age (cal BP) at which the margin passed this point, or null when the point lay outside
 * the ice cover at the start of the history (already free of ice at `startCalBp`).
 */
export function trueDeglaciationAge(p: RetreatParams, lon: number, lat: number): number | null {
  const { x, y } = toLocalKm(p, lon, lat);
  const d = Math.hypot(x, y);
  if (d === 0) return p.endCalBp;
  const theta = Math.atan2(y, x);
  const r0 = fullCoverRadiusKm(p, theta);
  if (d >= r0) return null;
  const u = Math.pow(d / r0, 1 / exponent(p, theta));
  return ageAtProgress(p, u);
}

function ring(p: RetreatParams, radius: (theta: number) => number): [number, number][] {
  const coords: [number, number][] = [];
  for (let i = 0; i < RING_VERTICES; i++) {
    const theta = (2 * Math.PI * i) / RING_VERTICES;
    const r = radius(theta);
    coords.push(fromLocalKm(p, r * Math.cos(theta), r * Math.sin(theta)));
  }
  coords.push([coords[0][0], coords[0][1]]);
  return coords; // counter-clockwise, as GeoJSON asks of outer rings
}

/** Ages of the isochrones, oldest first: start, start − step, … down to the last with ice. */
export function isochroneAges(p: RetreatParams, step = ISOCHRONE_STEP_YEARS): number[] {
  const ages: number[] = [];
  for (let a = p.startCalBp; a > p.endCalBp; a -= step) ages.push(a);
  return ages;
}

/** Ice margins every `step` years as closed polygons (lon/lat), each with its age_cal_bp. */
export function isochrones(p: RetreatParams, step = ISOCHRONE_STEP_YEARS): IsochroneCollection {
  return marginsWithBias(p, 0, step);
}

/**
 * Margins of a model run whose retreat is shifted by `biasYears`: positive = the run frees the
 * land earlier (at age A it shows the true margin of A − bias), negative = later. Slices where
 * the run has no ice left are omitted.
 */
export function marginsWithBias(p: RetreatParams, biasYears: number, step = ISOCHRONE_STEP_YEARS): IsochroneCollection {
  const features: Feature<Polygon, { age_cal_bp: number }>[] = [];
  for (const age of isochroneAges(p, step)) {
    const shifted = Math.min(age - biasYears, p.startCalBp);
    if (progressAt(p, shifted) <= 0) continue;
    features.push({
      type: "Feature",
      properties: { age_cal_bp: age },
      geometry: { type: "Polygon", coordinates: [ring(p, (theta) => marginRadiusKm(p, theta, shifted))] },
    });
  }
  return { type: "FeatureCollection", features };
}

/** Even–odd point-in-ring test in lon/lat (the rings are small enough for planar geometry). */
export function pointInRing(lon: number, lat: number, coords: readonly (readonly number[])[]): boolean {
  let inside = false;
  for (let i = 0, j = coords.length - 1; i < coords.length; j = i++) {
    const [xi, yi] = coords[i];
    const [xj, yj] = coords[j];
    if (yi > lat !== yj > lat && lon < ((xj - xi) * (lat - yi)) / (yj - yi) + xi) inside = !inside;
  }
  return inside;
}

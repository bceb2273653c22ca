// Reading an uploaded margin reconstruction: a GeoJSON FeatureCollection of Polygon or
// MultiPolygon isochrones, each with a numeric age_cal_bp. Every problem is reported at once,
// naming the feature it concerns.

import type { MultiPolygon, Polygon } from "geojson";

export const MAX_RECONSTRUCTION_FEATURES = 2000;
export const MAX_RECONSTRUCTION_VERTICES = 500_000;

export interface ParsedIsochrone {
  ageCalBp: number;
  geometry: Polygon | MultiPolygon;
}

export type ReconstructionParse =
  | { ok: true; isochrones: ParsedIsochrone[]; statedUncertaintyYr: number | null; vertices: number }
  | { ok: false; errors: string[] };

const isObj = (x: unknown): x is Record<string, unknown> => typeof x === "object" && x !== null && !Array.isArray(x);

function ringProblems(ring: unknown, where: string): string | null {
  if (!Array.isArray(ring) || ring.length < 4) return `${where}: a ring needs at least four positions.`;
  for (const p of ring) {
    if (!Array.isArray(p) || p.length < 2 || !p.slice(0, 2).every((v) => typeof v === "number" && Number.isFinite(v))) {
      return `${where}: every position must be [longitude, latitude] in numbers.`;
    }
    if (Math.abs(p[0]) > 180 || Math.abs(p[1]) > 90) return `${where}: a position lies outside longitude ±180 / latitude ±90.`;
  }
  const [a, b] = [ring[0], ring[ring.length - 1]];
  if (a[0] !== b[0] || a[1] !== b[1]) return `${where}: a ring must end where it starts.`;
  return null;
}

function geometryProblems(g: unknown, where: string): { problem: string | null; vertices: number } {
  if (!isObj(g)) return { problem: `${where}: the geometry is missing.`, vertices: 0 };
  let polygons: unknown[];
  if (g.type === "Polygon") polygons = [g.coordinates];
  else if (g.type === "MultiPolygon" && Array.isArray(g.coordinates)) polygons = g.coordinates;
  else return { problem: `${where}: the geometry must be a Polygon or MultiPolygon, not ${String(g.type)}.`, vertices: 0 };
  let vertices = 0;
  for (const poly of polygons) {
    if (!Array.isArray(poly) || poly.length === 0) return { problem: `${where}: a polygon has no rings.`, vertices };
    for (const ring of poly) {
      const p = ringProblems(ring, where);
      if (p) return { problem: p, vertices };
      vertices += (ring as unknown[]).length;
    }
  }
  return { problem: null, vertices };
}

/** Validates the parsed JSON of a reconstruction file. */
export function parseReconstruction(json: unknown): ReconstructionParse {
  if (!isObj(json) || json.type !== "FeatureCollection" || !Array.isArray(json.features)) {
    return { ok: false, errors: ["The file must be a GeoJSON FeatureCollection."] };
  }
  const features = json.features as unknown[];
  if (features.length === 0) return { ok: false, errors: ["The FeatureCollection has no features."] };
  if (features.length > MAX_RECONSTRUCTION_FEATURES) {
    return {
      ok: false,
      errors: [`The file has ${features.length} features; at most ${MAX_RECONSTRUCTION_FEATURES} isochrones are accepted.`],
    };
  }
  const errors: string[] = [];
  const isochrones: ParsedIsochrone[] = [];
  const uncertainties = new Set<number>();
  let vertices = 0;
  features.forEach((f, i) => {
    const where = `Feature ${i + 1}`;
    if (!isObj(f) || f.type !== "Feature") {
      errors.push(`${where}: not a GeoJSON Feature.`);
      return;
    }
    const props = isObj(f.properties) ? f.properties : {};
    const age = props.age_cal_bp;
    if (typeof age !== "number" || !Number.isFinite(age) || age < 0 || age > 60000) {
      errors.push(
        `${where}: age_cal_bp must be a number of years cal BP between 0 and 60,000 (found ${JSON.stringify(age ?? null)}).`,
      );
    }
    const u = props.age_uncertainty_yr;
    if (u !== undefined) {
      if (typeof u !== "number" || !(u > 0)) errors.push(`${where}: age_uncertainty_yr must be a positive number of years.`);
      else uncertainties.add(u);
    }
    const g = geometryProblems(f.geometry, where);
    vertices += g.vertices;
    if (g.problem) errors.push(g.problem);
    else if (typeof age === "number") isochrones.push({ ageCalBp: age, geometry: f.geometry as Polygon | MultiPolygon });
  });
  if (vertices > MAX_RECONSTRUCTION_VERTICES)
    errors.push(`The isochrones have ${vertices} positions; at most ${MAX_RECONSTRUCTION_VERTICES} are accepted.`);
  const ages = isochrones.map((x) => x.ageCalBp);
  if (new Set(ages).size < ages.length)
    errors.push("Two isochrones share an age_cal_bp; give each age one feature (use a MultiPolygon for several parts).");
  if (errors.length) return { ok: false, errors };
  const statedUncertaintyYr = uncertainties.size ? Math.max(...uncertainties) : null;
  return { ok: true, isochrones, statedUncertaintyYr, vertices };
}

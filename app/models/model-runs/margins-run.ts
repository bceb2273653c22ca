// GeoJSON margins as a model run: a FeatureCollection of Polygon/MultiPolygon ice extents, each
// with its age_cal_bp (the shape of the demo's reconstruction). Several features may share an
// age; together they are that slice's ice. A feature with a null geometry (or an empty
// MultiPolygon) marks an age with no ice left, so a run can say when its ice is gone.

import booleanPointInPolygon from "@turf/boolean-point-in-polygon";
import type { Feature, MultiPolygon, Polygon } from "geojson";
import { ModelRunFileError } from "./errors.ts";

export interface MarginSlice {
  calBp: number;
  polygons: Feature<Polygon | MultiPolygon>[];
}

export interface MarginsRun {
  kind: "margins";
  slices: MarginSlice[];
}

function bbox(g: Polygon | MultiPolygon): [number, number, number, number] {
  let w = Infinity,
    s = Infinity,
    e = -Infinity,
    n = -Infinity;
  const rings = g.type === "Polygon" ? g.coordinates : g.coordinates.flat();
  for (const ring of rings)
    for (const [x, y] of ring) {
      if (x < w) w = x;
      if (x > e) e = x;
      if (y < s) s = y;
      if (y > n) n = y;
    }
  return [w, s, e, n];
}

function validRing(r: unknown): boolean {
  return (
    Array.isArray(r) &&
    r.length >= 4 &&
    r.every((p) => Array.isArray(p) && p.length >= 2 && p.every((c) => typeof c === "number" && Number.isFinite(c)))
  );
}

/** Parses and checks margins; every problem is listed in one error. */
export function parseMargins(text: string): MarginsRun {
  let data: unknown;
  try {
    data = JSON.parse(text);
  } catch (e) {
    throw new ModelRunFileError("bad-geojson", `The file is not valid JSON: ${(e as Error).message}`);
  }
  const fc = data as { type?: unknown; features?: unknown };
  if (!fc || fc.type !== "FeatureCollection" || !Array.isArray(fc.features)) {
    throw new ModelRunFileError("bad-geojson", "The file is JSON but not a GeoJSON FeatureCollection.");
  }
  const problems: string[] = [];
  const byAge = new Map<number, Feature<Polygon | MultiPolygon>[]>();
  (fc.features as Feature[]).forEach((f, i) => {
    const where = `Feature ${i + 1}`;
    const age = Number((f?.properties as Record<string, unknown> | null)?.age_cal_bp);
    const g = f?.geometry as Polygon | MultiPolygon | null;
    if (!f?.properties || (f.properties as Record<string, unknown>).age_cal_bp === undefined || !Number.isFinite(age)) {
      problems.push(`${where}: no numeric age_cal_bp property.`);
      return;
    }
    // A null geometry or an empty MultiPolygon says: no ice at this age.
    if (g === null || (g?.type === "MultiPolygon" && Array.isArray(g.coordinates) && g.coordinates.length === 0)) {
      byAge.set(age, byAge.get(age) ?? []);
      return;
    }
    if (!g || (g.type !== "Polygon" && (g as { type: string }).type !== "MultiPolygon")) {
      problems.push(`${where}: geometry is ${g?.type ?? "missing"}, not Polygon or MultiPolygon.`);
      return;
    }
    const rings = g.type === "Polygon" ? g.coordinates : (g.coordinates as unknown[][]).flat();
    if (!Array.isArray(rings) || rings.length === 0 || !rings.every(validRing)) {
      problems.push(`${where}: its rings need at least four [lon, lat] positions each.`);
      return;
    }
    const feature: Feature<Polygon | MultiPolygon> = { type: "Feature", properties: {}, geometry: { ...g, bbox: bbox(g) } };
    byAge.set(age, [...(byAge.get(age) ?? []), feature]);
  });
  if (problems.length)
    throw new ModelRunFileError(
      "bad-geojson",
      problems.slice(0, 20).join(" ") + (problems.length > 20 ? ` …and ${problems.length - 20} more.` : ""),
    );
  if (byAge.size === 0)
    throw new ModelRunFileError("no-time-axis", "The FeatureCollection has no ice extents, so no time slices.");
  const slices = [...byAge.entries()].sort((a, b) => b[0] - a[0]).map(([calBp, polygons]) => ({ calBp, polygons }));
  return { kind: "margins", slices };
}

/** Whether a point lies under any of a slice's polygons. */
export function underIce(slice: MarginSlice, lon: number, lat: number): boolean {
  for (const p of slice.polygons) {
    const [w, s, e, n] = p.geometry.bbox as number[];
    if (lon < w || lon > e || lat < s || lat > n) continue;
    if (booleanPointInPolygon([lon, lat], p)) return true;
  }
  return false;
}

/** Points at which F is sampled around a site: the site and, with a tolerance, eight around it. */
export function samplePoints(lon: number, lat: number, toleranceKm: number): [number, number][] {
  if (!(toleranceKm > 0)) return [[lon, lat]];
  const dLat = toleranceKm / 110.574;
  const dLon = toleranceKm / (111.32 * Math.cos((lat * Math.PI) / 180));
  const out: [number, number][] = [[lon, lat]];
  for (let k = 0; k < 8; k++) {
    const a = (k * Math.PI) / 4;
    out.push([lon + dLon * Math.cos(a), lat + dLat * Math.sin(a)]);
  }
  return out;
}

// Land mask for placing demo sites: an even–odd point-in-polygon test over the land rings near
// the demo region, with the edges bucketed by latitude so one test touches only a few edges.
// Pure: the caller passes the land geometry (see land.server.ts for loading it from world-atlas).

import type { Feature, FeatureCollection, Geometry, Position } from "geojson";

export type LandGeometry = Geometry | Feature | FeatureCollection;

export interface Bounds {
  west: number;
  east: number;
  south: number;
  north: number;
}

export interface LandIndex {
  bounds: Bounds;
  /** True when the point is on land; false outside the indexed bounds. */
  contains(lon: number, lat: number): boolean;
}

const BAND_DEG = 0.05;

function collectRings(g: LandGeometry, out: Position[][]) {
  switch (g.type) {
    case "FeatureCollection":
      for (const f of g.features) collectRings(f, out);
      break;
    case "Feature":
      if (g.geometry) collectRings(g.geometry, out);
      break;
    case "GeometryCollection":
      for (const x of g.geometries) collectRings(x, out);
      break;
    case "Polygon":
      for (const r of g.coordinates) out.push(r);
      break;
    case "MultiPolygon":
      for (const poly of g.coordinates) for (const r of poly) out.push(r);
      break;
    default:
      break;
  }
}

/**
 * Indexes the rings whose bounding box meets `bounds`. Even–odd parity over whole rings is
 * exact for land polygons with holes, since a ring that does not enclose the point is crossed
 * an even number of times.
 */
export function buildLandIndex(land: LandGeometry, bounds: Bounds): LandIndex {
  const rings: Position[][] = [];
  collectRings(land, rings);
  const nBands = Math.ceil((bounds.north - bounds.south) / BAND_DEG);
  const bands: number[][] = Array.from({ length: nBands }, () => []);
  // Flat edge store: x1, y1, x2, y2 per edge.
  const edges: number[] = [];
  for (const r of rings) {
    let w = Infinity;
    let e = -Infinity;
    let s = Infinity;
    let n = -Infinity;
    for (const [x, y] of r) {
      if (x < w) w = x;
      if (x > e) e = x;
      if (y < s) s = y;
      if (y > n) n = y;
    }
    if (e < bounds.west || w > bounds.east || n < bounds.south || s > bounds.north) continue;
    for (let i = 0; i < r.length - 1; i++) {
      const [x1, y1] = r[i];
      const [x2, y2] = r[i + 1];
      const lo = Math.min(y1, y2);
      const hi = Math.max(y1, y2);
      if (hi < bounds.south || lo > bounds.north || y1 === y2) continue;
      const id = edges.length / 4;
      edges.push(x1, y1, x2, y2);
      const b0 = Math.max(0, Math.floor((lo - bounds.south) / BAND_DEG));
      const b1 = Math.min(nBands - 1, Math.floor((hi - bounds.south) / BAND_DEG));
      for (let b = b0; b <= b1; b++) bands[b].push(id);
    }
  }
  return {
    bounds,
    contains(lon, lat) {
      if (lon < bounds.west || lon > bounds.east || lat < bounds.south || lat >= bounds.north) return false;
      const band = bands[Math.floor((lat - bounds.south) / BAND_DEG)];
      let inside = false;
      for (const id of band) {
        const k = id * 4;
        const x1 = edges[k];
        const y1 = edges[k + 1];
        const x2 = edges[k + 2];
        const y2 = edges[k + 3];
        if (y1 > lat !== y2 > lat && lon < ((x2 - x1) * (lat - y1)) / (y2 - y1) + x1) inside = !inside;
      }
      return inside;
    },
  };
}

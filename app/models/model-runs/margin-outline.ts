// A run's ice margin as small polygons for the run page's map, computed while the run is scored.
// Grid runs: the outline of the ice cells, traced with marching squares (d3-contour) where half
// a block of cells is ice; grids wider than MAX_BLOCKS cells are first averaged in square
// blocks. GeoJSON runs: their own polygons. Either way a stored slice has at most
// MAX_MARGIN_VERTICES positions (rings thinned evenly beyond that, rings too small to keep
// dropped), rounded to 0.001° (about 100 m), and a run keeps at most MAX_MARGIN_SLICES slices
// spread evenly over its span, so what is stored is bounded whatever the run's size.

import { contours } from "d3-contour";
import type { MultiPolygon, Polygon } from "geojson";

export const MAX_MARGIN_SLICES = 60;
export const MAX_MARGIN_VERTICES = 3000;
const MAX_BLOCKS = 160;

/** One stored slice: its age and its ice as MultiPolygon coordinates in lon/lat. */
export interface MarginOutline {
  calBp: number;
  coordinates: MultiPolygon["coordinates"];
}

/** Which of `n` slices (file order) keep a margin: all when few, else evenly spread, ends included. */
export function marginSlices(n: number, max = MAX_MARGIN_SLICES): Set<number> {
  if (n <= max) return new Set(Array.from({ length: n }, (_, i) => i));
  const out = new Set<number>();
  for (let k = 0; k < max; k++) out.add(Math.round((k * (n - 1)) / (max - 1)));
  return out;
}

const round = (v: number) => Math.round(v * 1000) / 1000;

function countVertices(coords: MultiPolygon["coordinates"]): number {
  let n = 0;
  for (const poly of coords) for (const ring of poly) n += ring.length;
  return n;
}

/** Rounds positions and thins rings evenly until the whole stays under `max` positions. */
export function boundVertices(coords: MultiPolygon["coordinates"], max = MAX_MARGIN_VERTICES): MultiPolygon["coordinates"] {
  const total = countVertices(coords);
  const step = Math.max(1, Math.ceil(total / max));
  const out: MultiPolygon["coordinates"] = [];
  for (const poly of coords) {
    const rings: Polygon["coordinates"] = [];
    for (const [r, ring] of poly.entries()) {
      const kept: number[][] = [];
      for (let i = 0; i < ring.length - 1; i += step) kept.push([round(ring[i][0]), round(ring[i][1])]);
      if (kept.length < 3) {
        if (r === 0) break; // the outer ring is too small to draw: drop the polygon
        continue;
      }
      kept.push(kept[0]);
      rings.push(kept);
    }
    if (rings.length) out.push(rings);
  }
  return out;
}

export interface GridGeometry {
  xs: ArrayLike<number>;
  ys: ArrayLike<number>;
  toLonLat(x: number, y: number): [number, number];
}

/** Grid coordinate of a fractional cell-edge position `g` (0 = outer edge of the first cell). */
function axisAt(axis: ArrayLike<number>, g: number): number {
  const n = axis.length;
  const step = n > 1 ? (axis[n - 1] - axis[0]) / (n - 1) : 1;
  return axis[0] + (g - 0.5) * step;
}

/**
 * The outline of the ice in one slice (flat row-major [y][x]); `isIce` decides each cell (fill
 * values count as ice-free). Positions in lon/lat.
 */
export function gridMargin(
  slice: ArrayLike<number>,
  grid: GridGeometry,
  isIce: (v: number) => boolean,
  maxVertices = MAX_MARGIN_VERTICES,
): MultiPolygon["coordinates"] {
  const nx = grid.xs.length;
  const ny = grid.ys.length;
  const f = Math.max(1, Math.ceil(Math.max(nx, ny) / MAX_BLOCKS));
  const bx = Math.ceil(nx / f);
  const by = Math.ceil(ny / f);
  const share = new Float64Array(bx * by);
  const count = new Uint16Array(bx * by);
  for (let j = 0; j < ny; j++) {
    const row = Math.floor(j / f) * bx;
    for (let i = 0; i < nx; i++) {
      const b = row + Math.floor(i / f);
      count[b]++;
      if (isIce(slice[j * nx + i])) share[b]++;
    }
  }
  for (let b = 0; b < share.length; b++) share[b] /= count[b];
  const [ice] = contours().size([bx, by]).thresholds([0.5])(Array.from(share));
  const coords = ice.coordinates.map((poly) =>
    poly.map((ring) => ring.map(([gx, gy]) => grid.toLonLat(axisAt(grid.xs, gx * f), axisAt(grid.ys, gy * f)))),
  );
  return boundVertices(coords, maxVertices);
}

/** A GeoJSON run's slice: its polygons joined into one bounded MultiPolygon. */
export function polygonsMargin(
  geometries: readonly (Polygon | MultiPolygon)[],
  maxVertices = MAX_MARGIN_VERTICES,
): MultiPolygon["coordinates"] {
  const coords: MultiPolygon["coordinates"] = [];
  for (const g of geometries) {
    if (g.type === "Polygon") coords.push(g.coordinates);
    else coords.push(...g.coordinates);
  }
  return boundVertices(coords, maxVertices);
}

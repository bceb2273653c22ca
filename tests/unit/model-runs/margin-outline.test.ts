import { describe, expect, it } from "vitest";
import { boundVertices, gridMargin, marginSlices, polygonsMargin } from "#app/models/model-runs/margin-outline.ts";

// A lon/lat grid of 1° cells whose centres run 0…9 (x) and 50…59 (y).
const grid = {
  xs: Float64Array.from({ length: 10 }, (_, i) => i),
  ys: Float64Array.from({ length: 10 }, (_, j) => 50 + j),
  toLonLat: (x: number, y: number) => [x, y] as [number, number],
};
const bounds = (coords: number[][][][]) => {
  const pts = coords.flat(2);
  return {
    w: Math.min(...pts.map((p) => p[0])),
    e: Math.max(...pts.map((p) => p[0])),
    s: Math.min(...pts.map((p) => p[1])),
    n: Math.max(...pts.map((p) => p[1])),
  };
};

describe("margin outline", () => {
  it("outlines the ice cells of a slice, halfway between ice and ice-free cell centres", () => {
    // Ice in the western half: columns 0–4 (centres 0…4), so the margin lies at x = 4.5 (hand-worked).
    const slice = Float32Array.from({ length: 100 }, (_, k) => (k % 10 < 5 ? 800 : 0));
    const coords = gridMargin(slice, grid, (v) => v > 1);
    expect(coords).toHaveLength(1);
    const b = bounds(coords);
    expect(b.e).toBeCloseTo(4.5, 6);
    // Closed at the grid's edge: half a cell beyond the outer centres at most.
    expect(b.w).toBeGreaterThanOrEqual(-0.5);
    expect(b.s).toBeGreaterThanOrEqual(49.5);
    expect(b.n).toBeLessThanOrEqual(59.5);
  });

  it("gives nothing when there is no ice, and counts fill values as no ice", () => {
    expect(gridMargin(new Float32Array(100), grid, (v) => v > 1)).toEqual([]);
    expect(gridMargin(new Float32Array(100).fill(Number.NaN), grid, (v) => v > 1)).toEqual([]);
  });

  it("keeps at most the given number of positions, rings still closed", () => {
    const ring = Array.from({ length: 1000 }, (_, i) => [Math.cos((i / 999) * 2 * Math.PI), Math.sin((i / 999) * 2 * Math.PI)]);
    ring[999] = ring[0];
    const out = boundVertices([[ring], [ring]], 300);
    const n = out.flat(2).length;
    expect(n).toBeLessThanOrEqual(300 + 2);
    for (const poly of out) expect(poly[0][0]).toEqual(poly[0][poly[0].length - 1]);
    // Positions rounded to 0.001°.
    expect(out[0][0][1][0]).toBe(Math.round(out[0][0][1][0] * 1000) / 1000);
    expect(polygonsMargin([{ type: "Polygon", coordinates: [ring] }], 100).flat(2).length).toBeLessThanOrEqual(102);
  });

  it("keeps every slice when few, else an even spread with both ends", () => {
    expect([...marginSlices(5)]).toEqual([0, 1, 2, 3, 4]);
    const many = marginSlices(121, 60);
    expect(many.size).toBe(60);
    expect(many.has(0) && many.has(120)).toBe(true);
  });
});

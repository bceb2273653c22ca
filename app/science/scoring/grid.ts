// Sites on a model's regular grid: which cells lie within the tolerance radius of a site, and
// the share of them free of ice in one time slice.

/** Fractional index of `v` along a regular axis (ascending or descending); NaN beyond half a cell out. */
export function fractionalIndex(axis: ArrayLike<number>, v: number): number {
  const n = axis.length;
  if (n === 1) return v === axis[0] ? 0 : Number.NaN;
  const step = (axis[n - 1] - axis[0]) / (n - 1);
  const f = (v - axis[0]) / step;
  return f < -0.5 || f > n - 0.5 ? Number.NaN : f;
}

/**
 * Row-major indices (y outer, x inner) of the cells whose centres lie within `toleranceCells`
 * cell widths of the site, always including the nearest cell; empty when the site is off the grid.
 */
export function cellsWithin(
  xs: ArrayLike<number>,
  ys: ArrayLike<number>,
  x: number,
  y: number,
  toleranceCells: number,
): number[] {
  const fi = fractionalIndex(xs, x);
  const fj = fractionalIndex(ys, y);
  if (Number.isNaN(fi) || Number.isNaN(fj)) return [];
  const nx = xs.length;
  const ny = ys.length;
  const r = Math.max(0, toleranceCells);
  const out: number[] = [];
  for (let j = Math.max(0, Math.ceil(fj - r)); j <= Math.min(ny - 1, Math.floor(fj + r)); j++) {
    for (let i = Math.max(0, Math.ceil(fi - r)); i <= Math.min(nx - 1, Math.floor(fi + r)); i++) {
      if ((i - fi) ** 2 + (j - fj) ** 2 <= r * r) out.push(j * nx + i);
    }
  }
  const nearest = Math.min(ny - 1, Math.max(0, Math.round(fj))) * nx + Math.min(nx - 1, Math.max(0, Math.round(fi)));
  if (!out.includes(nearest)) out.push(nearest);
  return out;
}

/** How a slice's values say "ice": thickness above a threshold, or a mask value of 1. */
export interface IceRule {
  kind: "thickness" | "mask";
  /** Thickness (m) above which a cell counts as ice; for masks, values ≥ 0.5 are ice. */
  thresholdM: number;
}

export function isIce(value: number, rule: IceRule): boolean {
  if (!Number.isFinite(value)) return false; // fill values: no ice recorded
  return rule.kind === "thickness" ? value > rule.thresholdM : value >= 0.5;
}

/** Share of the given cells free of ice in one slice (flat, row-major). */
export function iceFreeShare(slice: ArrayLike<number>, cells: readonly number[], rule: IceRule): number {
  if (cells.length === 0) return Number.NaN;
  let free = 0;
  for (const c of cells) if (!isIce(slice[c], rule)) free++;
  return free / cells.length;
}

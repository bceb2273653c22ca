// Display at honest precision: the error rounded to two significant digits and the value to the
// same decimal place, so 2.0713 ± 0.1142 reads "2.07 ± 0.11". Stored values stay unrounded.

import { groupThousands } from "./calendar.ts";

/** Decimal places that keep `sig` significant digits of `error` (negative: round to tens, …). */
export function decimalsForError(error: number, sig = 2): number {
  if (!(error > 0) || !Number.isFinite(error)) return 0;
  const exponent = Math.floor(Math.log10(error));
  // Rounding can carry into a new digit (0.0996 → 0.10): recompute from the rounded error.
  const d = sig - 1 - exponent;
  const rounded = roundTo(error, d);
  return sig - 1 - Math.floor(Math.log10(rounded));
}

function roundTo(x: number, decimals: number): number {
  const f = 10 ** decimals;
  return Math.round(x * f) / f;
}

function show(x: number, decimals: number): string {
  if (decimals > 0) {
    const [int, frac] = Math.abs(x).toFixed(decimals).split(".");
    return `${x < 0 && Number(`${int}.${frac}`) !== 0 ? "−" : ""}${groupThousands(Number(int))}.${frac}`;
  }
  const r = roundTo(x, decimals);
  return `${r < 0 ? "−" : ""}${groupThousands(Math.abs(r))}`;
}

/**
 * "2.07 ± 0.11 Gy/ka"; with no usable error, the value at three significant digits at most, whole
 * units kept and no zeros added after the point ("2.07", "12,346", "−50", "0"): digits nobody stated
 * are not invented.
 */
export function formatWithError(value: number, error: number | null | undefined, unit?: string): string {
  const suffix = unit ? ` ${unit}` : "";
  if (error == null || !(error > 0) || !Number.isFinite(error)) {
    const shown = show(value, Math.max(0, 2 - Math.floor(Math.log10(Math.abs(value) || 1))));
    const trimmed = shown.includes(".") ? shown.replace(/\.?0+$/, "") : shown;
    return `${trimmed === "−0" ? "0" : trimmed}${suffix}`;
  }
  const d = decimalsForError(error);
  return `${show(value, d)} ± ${show(error, d)}${suffix}`;
}

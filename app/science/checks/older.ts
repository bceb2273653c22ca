// P(θ_A > θ_B) for many pairs of one run: the same result as probabilityOlder in
// consistency.ts, with each density's running sum computed once and kept with the density.

import type { CalendarDensity } from "../density.ts";

const cumulative = new WeakMap<CalendarDensity, Float64Array>();

function cumOf(d: CalendarDensity): Float64Array {
  let c = cumulative.get(d);
  if (!c) {
    const v = d.values;
    c = new Float64Array(v.length + 1);
    for (let j = 0; j < v.length; j++) c[j + 1] = c[j] + v[j];
    cumulative.set(d, c);
  }
  return c;
}

/** P(a's calendar age is older than b's), ties within a year counted half; 0 when a lies wholly younger. */
export function olderThan(a: CalendarDensity, b: CalendarDensity): number {
  const aEnd = a.startCalBp + a.values.length - 1;
  if (aEnd < b.startCalBp) return 0;
  const bEnd = b.startCalBp + b.values.length - 1;
  if (a.startCalBp > bEnd) return 1;
  const ca = cumOf(a);
  const cb = cumOf(b);
  const nb = b.values.length;
  const totalA = ca[a.values.length];
  const totalB = cb[nb];
  let p = 0;
  // Years of a older than all of b contribute their whole mass; only the overlap needs a sum.
  const firstI = Math.max(0, b.startCalBp - a.startCalBp);
  const lastI = Math.min(a.values.length - 1, bEnd - a.startCalBp);
  for (let i = firstI; i <= lastI; i++) {
    const j = a.startCalBp + i - b.startCalBp;
    p += a.values[i] * (cb[j] + 0.5 * b.values[j]);
  }
  p += (totalA - ca[lastI + 1]) * totalB;
  return p / (totalA * totalB);
}

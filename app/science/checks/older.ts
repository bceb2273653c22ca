// P(θ_A > θ_B) for many pairs of one run: the same result as probabilityOlder in consistency.ts,
// in one pass over both densities and without allocating (a run meets thousands of pairs, and
// running sums kept per density cost more in memory and collection than they saved).

import type { CalendarDensity } from "../density.ts";

/** P(a's calendar age is older than b's), ties within a year counted half; 0 when a lies wholly younger. */
export function olderThan(a: CalendarDensity, b: CalendarDensity): number {
  const av = a.values;
  const bv = b.values;
  const na = av.length;
  const nb = bv.length;
  const aEnd = a.startCalBp + na - 1;
  if (aEnd < b.startCalBp) return 0;
  const bEnd = b.startCalBp + nb - 1;
  if (a.startCalBp > bEnd) return 1;
  // The years of a that b also covers; a's younger years before them see none of b younger than them.
  const firstI = Math.max(0, b.startCalBp - a.startCalBp);
  const lastI = Math.min(na - 1, bEnd - a.startCalBp);
  let totalA = 0;
  for (let i = 0; i < firstI; i++) totalA += av[i];
  let below = 0; // mass of b younger than the current year
  for (let j = 0, j0 = a.startCalBp + firstI - b.startCalBp; j < j0; j++) below += bv[j];
  let p = 0;
  for (let i = firstI, j = a.startCalBp + firstI - b.startCalBp; i <= lastI; i++, j++) {
    const x = av[i];
    const y = bv[j];
    p += x * (below + 0.5 * y);
    below += y;
    totalA += x;
  }
  for (let j = a.startCalBp + lastI + 1 - b.startCalBp; j < nb; j++) below += bv[j];
  const totalB = below;
  // Years of a older than all of b contribute their whole mass.
  let olderTail = 0;
  for (let i = lastI + 1; i < na; i++) olderTail += av[i];
  totalA += olderTail;
  p += olderTail * totalB;
  return p / (totalA * totalB);
}

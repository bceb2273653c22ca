// Special functions for the χ² distribution: log-gamma, the regularised incomplete gamma
// function, and the χ² CDF and quantile built on them.

const LANCZOS_G = 7;
const LANCZOS = [
  0.99999999999980993, 676.5203681218851, -1259.1392167224028, 771.32342877765313, -176.61502916214059, 12.507343278686905,
  -0.13857109526572012, 9.9843695780195716e-6, 1.5056327351493116e-7,
];

/** ln Γ(x) for x > 0 (Lanczos approximation, ~15 significant digits). */
export function logGamma(x: number): number {
  if (x < 0.5) {
    // Reflection keeps the series in its accurate region.
    return Math.log(Math.PI / Math.abs(Math.sin(Math.PI * x))) - logGamma(1 - x);
  }
  const z = x - 1;
  let a = LANCZOS[0];
  const t = z + LANCZOS_G + 0.5;
  for (let i = 1; i < LANCZOS.length; i++) a += LANCZOS[i] / (z + i);
  return 0.5 * Math.log(2 * Math.PI) + (z + 0.5) * Math.log(t) - t + Math.log(a);
}

/**
 * Regularised lower incomplete gamma P(a, x). The series converges fast below a + 1, the
 * continued fraction (modified Lentz) above it.
 */
export function regularizedGammaP(a: number, x: number): number {
  if (!(a > 0)) throw new Error("The shape must be positive.");
  if (x <= 0) return 0;
  if (!Number.isFinite(x)) return 1;
  const lnPrefix = a * Math.log(x) - x - logGamma(a);
  if (x < a + 1) {
    let term = 1 / a;
    let sum = term;
    for (let n = 1; n < 1000; n++) {
      term *= x / (a + n);
      sum += term;
      if (Math.abs(term) < Math.abs(sum) * 1e-16) break;
    }
    return Math.min(1, sum * Math.exp(lnPrefix));
  }
  const tiny = 1e-300;
  let b = x + 1 - a;
  let c = 1 / tiny;
  let d = 1 / b;
  let h = d;
  for (let i = 1; i < 1000; i++) {
    const an = -i * (i - a);
    b += 2;
    d = an * d + b;
    if (Math.abs(d) < tiny) d = tiny;
    c = b + an / c;
    if (Math.abs(c) < tiny) c = tiny;
    d = 1 / d;
    const delta = d * c;
    h *= delta;
    if (Math.abs(delta - 1) < 1e-16) break;
  }
  return Math.max(0, 1 - Math.exp(lnPrefix) * h);
}

export function chiSquareCdf(x: number, df: number): number {
  if (!(df > 0)) throw new Error("Degrees of freedom must be positive.");
  return x <= 0 ? 0 : regularizedGammaP(df / 2, x / 2);
}

/** x such that P(χ²_df ≤ x) = p, by bracketing and bisection (monotone CDF, robust for any df). */
export function chiSquareQuantile(p: number, df: number): number {
  if (!(p > 0 && p < 1)) throw new Error("The probability must be between 0 and 1.");
  let lo = 0;
  let hi = Math.max(1, df);
  while (chiSquareCdf(hi, df) < p) hi *= 2;
  for (let i = 0; i < 200; i++) {
    const mid = 0.5 * (lo + hi);
    if (chiSquareCdf(mid, df) < p) lo = mid;
    else hi = mid;
    if (hi - lo <= 1e-12 * hi) break;
  }
  return 0.5 * (lo + hi);
}

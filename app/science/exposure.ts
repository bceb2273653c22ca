// Surface exposure ages in the simplest case (Lal 1991): constant production, no erosion,
// no inheritance, no shielding changes. Real exposure ages need the corrections this omits.

/** 10Be half-life 1.387 Ma (Chmeleff et al. 2010; Korschinek et al. 2010). */
export const BE10_HALF_LIFE_YEARS = 1.387e6;
export const BE10_DECAY_CONSTANT = Math.LN2 / BE10_HALF_LIFE_YEARS;

/** N = (P/λ)(1 − e^(−λt)), atoms/g, for production P (atoms/g/yr) over t years. */
export function nuclideConcentration(production: number, t: number, lambda = BE10_DECAY_CONSTANT): number {
  return (production / lambda) * (1 - Math.exp(-lambda * t));
}

/**
 * Inverse of the build-up curve. Returns Infinity at or above saturation (P/λ), where the
 * concentration no longer tells the age.
 */
export function exposureAge(concentration: number, production: number, lambda = BE10_DECAY_CONSTANT): number {
  if (!(production > 0)) throw new Error("Production must be positive.");
  const x = (concentration * lambda) / production;
  if (x >= 1) return Number.POSITIVE_INFINITY;
  return -Math.log1p(-x) / lambda;
}

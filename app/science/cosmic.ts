// Cosmic dose rate (Prescott & Hutton 1994, Radiation Measurements 23:497–500): the sea-level,
// 55°-geomagnetic-latitude value under an overburden, scaled to the site's altitude and
// geomagnetic latitude, with its error from depth, density and the formula's own allowance.

/** Below this overburden (hg/cm²) the cosmic formula is outside its stated validity. */
export const COSMIC_MIN_OVERBURDEN = 1.67;

/** Common-practice allowance for the formula itself (relative, 1σ). */
export const COSMIC_FORMULA_RELATIVE_ERROR = 0.1;

/**
 * Cosmic dose rate (Gy/ka) at sea level and geomagnetic latitude 55° under `x` hg/cm² of
 * overburden (Prescott & Hutton 1994, from memory). Valid for x above 1.67 hg/cm².
 */
export function cosmicDoseRate(x: number): number {
  return (6072 / ((Math.pow(x + 11.6, 1.68) + 75) * (x + 212))) * Math.exp(-5.5e-4 * x);
}

/** d(cosmicDoseRate)/dx, analytically. */
export function cosmicDoseRateSlope(x: number): number {
  const a = Math.pow(x + 11.6, 1.68) + 75;
  const b = x + 212;
  const da = 1.68 * Math.pow(x + 11.6, 0.68);
  const d = cosmicDoseRate(x);
  return d * (-da / a - 1 / b - 5.5e-4);
}

/**
 * 1 m of sediment at 1 g/cm³ is 100 g/cm² = 1 hg/cm², so the overburden in hg/cm² is simply
 * depth (m) × density (g/cm³).
 */
export function overburden(depthM: number, densityGcm3: number): number {
  return depthM * densityGcm3;
}

/**
 * F, J and H (km) of D = D0 · [F + J · e^(h/H)] against geomagnetic latitude, read from
 * Prescott & Hutton 1994 Fig. 2 (values from memory of a reading of the figure, not confirmed
 * against the paper here); linear between the nodes, constant trend above 40°.
 */
const FJH_NODES: readonly (readonly [number, number, number, number])[] = [
  // latitude °, F, J, H
  [0, 0.3988, 0.5177, 4.398],
  [10, 0.3811, 0.5437, 4.359],
  [20, 0.3432, 0.5897, 4.292],
  [30, 0.2809, 0.6857, 4.179],
  [35, 0.2393, 0.7563, 4.1],
  [40, 0.2307, 0.7588, 4.0994],
  [90, 0.2257, 0.7838, 4.1094],
];

export function altitudeLatitudeParameters(geomagneticLatitude: number): { F: number; J: number; H: number } {
  const lat = Math.min(90, Math.abs(geomagneticLatitude));
  let i = 0;
  while (i < FJH_NODES.length - 2 && FJH_NODES[i + 1][0] < lat) i++;
  const [l0, f0, j0, h0] = FJH_NODES[i];
  const [l1, f1, j1, h1] = FJH_NODES[i + 1];
  const t = (lat - l0) / (l1 - l0);
  return { F: f0 + t * (f1 - f0), J: j0 + t * (j1 - j0), H: h0 + t * (h1 - h0) };
}

/** Factor F + J·e^(h/H) taking the sea-level, 55° value to the site; h in km. */
export function cosmicScaleFactor(geomagneticLatitude: number, altitudeKm: number): number {
  const { F, J, H } = altitudeLatitudeParameters(geomagneticLatitude);
  return F + J * Math.exp(altitudeKm / H);
}

/** Geomagnetic north pole of the dipole used for the scaling (78.5° N, 291.0° E; from memory). */
export const GEOMAGNETIC_POLE = { latitude: 78.5, longitude: 291.0 };

/** Geomagnetic latitude (degrees) of a geographic position, for a centred dipole. */
export function geomagneticLatitude(latitude: number, longitude: number): number {
  const r = Math.PI / 180;
  const p = GEOMAGNETIC_POLE;
  const s =
    Math.sin(latitude * r) * Math.sin(p.latitude * r) +
    Math.cos(latitude * r) * Math.cos(p.latitude * r) * Math.cos((longitude - p.longitude) * r);
  return Math.asin(Math.max(-1, Math.min(1, s))) / r;
}

export interface CosmicInput {
  depthM: number;
  depthError: number;
  density: number;
  densityError: number;
  /** Site position and elevation for the scaling; without it the sea-level 55° value is used. */
  site?: { latitude: number; longitude: number; elevationM: number | null } | null;
  /** Relative allowance for the formula (default COSMIC_FORMULA_RELATIVE_ERROR). */
  relativeError?: number;
}

export interface CosmicResult {
  x: number;
  doseRate: number;
  /** Quadrature of the three terms below. */
  error: number;
  /** ∂D/∂depth and ∂D/∂density, for the breakdown of the total's error. */
  dDepth: number;
  dDensity: number;
  /** The formula allowance's share, Gy/ka. */
  formulaError: number;
  scale: number;
  geomagneticLatitude: number | null;
  withinValidity: boolean;
  caution?: string;
}

export function cosmicAtDepth(input: CosmicInput): CosmicResult {
  const { depthM, density } = input;
  if (!(depthM >= 0) || !(density > 0)) throw new Error("Depth must be ≥ 0 m and density > 0 g/cm³.");
  const x = overburden(depthM, density);
  const site = input.site;
  const geo = site ? geomagneticLatitude(site.latitude, site.longitude) : null;
  const scale = site ? cosmicScaleFactor(geo!, Math.max(0, site.elevationM ?? 0) / 1000) : 1;
  const d = cosmicDoseRate(x) * scale;
  const slope = cosmicDoseRateSlope(x) * scale;
  const dDepth = slope * density;
  const dDensity = slope * depthM;
  const formulaError = (input.relativeError ?? COSMIC_FORMULA_RELATIVE_ERROR) * d;
  const error = Math.hypot(dDepth * input.depthError, dDensity * input.densityError, formulaError);
  const withinValidity = x > COSMIC_MIN_OVERBURDEN;
  return {
    x,
    doseRate: d,
    error,
    dDepth,
    dDensity,
    formulaError,
    scale,
    geomagneticLatitude: geo,
    withinValidity,
    caution: withinValidity
      ? undefined
      : `Overburden ${x.toFixed(2)} hg/cm² is below ${COSMIC_MIN_OVERBURDEN} hg/cm², where the cosmic formula is not valid; the cosmic dose rate is an extrapolation.`,
  };
}

// Reservoir offsets beyond the marine ΔR: a freshwater (hard-water) offset for lake and river
// material on an atmospheric curve, applied like ΔR (added to the curve, errors in quadrature),
// and the hemisphere a curve belongs to, so a site calibrated on the other hemisphere's curve
// gets a warning.

export type CurveKind = "atmospheric" | "marine";

export interface OffsetFields {
  deltaR?: number | null;
  deltaRError?: number | null;
  freshwaterOffset?: number | null;
  freshwaterOffsetError?: number | null;
}

export interface AppliedOffset {
  deltaR: number;
  deltaRError: number;
  /** What was applied, for the curve label ("ΔR 81 ± 18", "freshwater offset 350 ± 60"). */
  label: string | null;
}

function fmt(x: number): string {
  return Number.isInteger(x) ? String(x) : x.toFixed(1);
}

/**
 * The offset calibration adds to the curve: ΔR on a marine curve, the freshwater offset on an
 * atmospheric one (Heaton et al. 2020 for ΔR; the hard-water offset is applied the same way,
 * common practice). The other kind's offset is not applied: it belongs to another curve.
 */
export function appliedOffset(kind: CurveKind, f: OffsetFields): AppliedOffset {
  if (kind === "marine") {
    if (f.deltaR == null) return { deltaR: 0, deltaRError: 0, label: "ΔR 0 ± 0 (none given)" };
    return { deltaR: f.deltaR, deltaRError: f.deltaRError ?? 0, label: `ΔR ${fmt(f.deltaR)} ± ${fmt(f.deltaRError ?? 0)}` };
  }
  if (f.freshwaterOffset == null) return { deltaR: 0, deltaRError: 0, label: null };
  const e = f.freshwaterOffsetError ?? 0;
  return { deltaR: f.freshwaterOffset, deltaRError: e, label: `freshwater offset ${fmt(f.freshwaterOffset)} ± ${fmt(e)}` };
}

export type Hemisphere = "north" | "south";

/** The hemisphere an atmospheric curve was built for, from its name; null for marine or unknown curves. */
export function curveHemisphere(curveName: string): Hemisphere | null {
  const n = curveName.toLowerCase();
  if (n.startsWith("intcal") || n.startsWith("nh")) return "north";
  if (n.startsWith("shcal") || n.startsWith("sh")) return "south";
  return null;
}

/** A warning when a site's hemisphere differs from its atmospheric curve's; null otherwise. */
export function hemisphereWarning(latitude: number | null | undefined, curveName: string, curveLabel = curveName): string | null {
  if (latitude == null || !Number.isFinite(latitude) || latitude === 0) return null;
  const h = curveHemisphere(curveName);
  if (!h) return null;
  const site: Hemisphere = latitude > 0 ? "north" : "south";
  if (site === h) return null;
  return `The site lies in the ${site}ern hemisphere (latitude ${Math.abs(latitude).toFixed(2)}° ${latitude < 0 ? "S" : "N"}) but is calibrated on ${curveLabel}, a ${h}ern-hemisphere curve.`;
}

// Check 6, reconstruction: for dates that say the site was free of ice, the probability over the
// date's calendar density that the site was still under ice according to a margin
// reconstruction (GeoJSON isochrones with an age, and a stated uncertainty).

import booleanPointInPolygon from "@turf/boolean-point-in-polygon";
import type { MultiPolygon, Polygon } from "geojson";
import { regularizedGammaP } from "../stats.ts";
import { prob, result, saysIceFree, yr, type CheckItem, type CheckResult } from "./types.ts";

const CHECK = "reconstruction" as const;
export const RECON_NOTE = 0.5;
export const RECON_WARNING = 0.8;
export const RECON_CONFLICT = 0.95;

export interface Isochrone {
  ageCalBp: number;
  geometry: Polygon | MultiPolygon;
  bbox: [number, number, number, number];
}

export interface Reconstruction {
  name: string;
  /** Stated 1σ uncertainty of the isochrone ages, years. */
  uncertaintyYr: number;
  /** Oldest first. */
  isochrones: Isochrone[];
}

/** Where the reconstruction puts a point's deglaciation. */
export type LocalDeglaciation =
  | { kind: "never-covered"; oldestCalBp: number }
  | { kind: "bracketed"; ageCalBp: number; sdYears: number; insideCalBp: number; outsideCalBp: number | null };

function bboxOf(g: Polygon | MultiPolygon): [number, number, number, number] {
  let w = Infinity;
  let s = Infinity;
  let e = -Infinity;
  let n = -Infinity;
  const rings = g.type === "Polygon" ? g.coordinates : g.coordinates.flat();
  for (const ring of rings)
    for (const [x, y] of ring) {
      if (x < w) w = x;
      if (x > e) e = x;
      if (y < s) s = y;
      if (y > n) n = y;
    }
  return [w, s, e, n];
}

export function makeReconstruction(
  name: string,
  uncertaintyYr: number,
  isochrones: readonly { ageCalBp: number; geometry: Polygon | MultiPolygon }[],
): Reconstruction {
  const sorted = [...isochrones].sort((a, b) => b.ageCalBp - a.ageCalBp);
  return { name, uncertaintyYr, isochrones: sorted.map((i) => ({ ...i, bbox: bboxOf(i.geometry) })) };
}

function inside(iso: Isochrone, lon: number, lat: number): boolean {
  const [w, s, e, n] = iso.bbox;
  if (lon < w || lon > e || lat < s || lat > n) return false;
  return booleanPointInPolygon([lon, lat], iso.geometry);
}

/**
 * The youngest isochrone that still covers the point and the next younger one that does not
 * bracket its deglaciation; the estimate is their midpoint, its σ the stated uncertainty and
 * the bracket's width as a uniform spread (width/√12) in quadrature.
 */
export function localDeglaciation(recon: Reconstruction, lon: number, lat: number): LocalDeglaciation {
  const isos = recon.isochrones;
  let youngestInside = -1;
  for (let i = 0; i < isos.length; i++) if (inside(isos[i], lon, lat)) youngestInside = i;
  if (youngestInside < 0) return { kind: "never-covered", oldestCalBp: isos[0]?.ageCalBp ?? 0 };
  const insideAge = isos[youngestInside].ageCalBp;
  const next = isos[youngestInside + 1];
  const outsideAge = next ? next.ageCalBp : null;
  const width = outsideAge === null ? 0 : insideAge - outsideAge;
  return {
    kind: "bracketed",
    ageCalBp: outsideAge === null ? insideAge : (insideAge + outsideAge) / 2,
    sdYears: Math.hypot(recon.uncertaintyYr, width / Math.sqrt(12)),
    insideCalBp: insideAge,
    outsideCalBp: outsideAge,
  };
}

/** Standard normal CDF from the regularised incomplete gamma: Φ(x) = ½(1 + sign(x)·P(½, x²/2)). */
export function normalCdf(x: number): number {
  if (x === 0) return 0.5;
  const p = regularizedGammaP(0.5, (x * x) / 2);
  return x > 0 ? 0.5 * (1 + p) : 0.5 * (1 - p);
}

const TABLE_STEP = 0.005;
const TABLE_MAX = 9;
let cdfTable: Float64Array | null = null;

function fastNormalCdf(x: number): number {
  if (x <= -TABLE_MAX) return 0;
  if (x >= TABLE_MAX) return 1;
  if (!cdfTable) {
    const n = Math.round((2 * TABLE_MAX) / TABLE_STEP) + 1;
    cdfTable = new Float64Array(n);
    for (let i = 0; i < n; i++) cdfTable[i] = normalCdf(-TABLE_MAX + i * TABLE_STEP);
  }
  const f = (x + TABLE_MAX) / TABLE_STEP;
  const i = Math.floor(f);
  const t = f - i;
  return cdfTable[i] * (1 - t) + cdfTable[i + 1] * t;
}

/** P(deglaciation younger than θ) over the date's density: the site was still under ice at its age. */
export function probabilityUnderIce(item: CheckItem, local: Extract<LocalDeglaciation, { kind: "bracketed" }>): number {
  const { values, startCalBp } = item.calendar!.density;
  let p = 0;
  let total = 0;
  const inv = 1 / local.sdYears;
  for (let i = 0; i < values.length; i++) {
    const v = values[i];
    if (v === 0) continue;
    total += v;
    p += v * fastNormalCdf((startCalBp + i - local.ageCalBp) * inv);
  }
  return total > 0 ? p / total : 0;
}

export function checkReconstruction(
  item: CheckItem,
  recon: Reconstruction | null,
  local: (item: CheckItem) => LocalDeglaciation,
): CheckResult {
  if (!recon) return result(CHECK, "pass", "No margin reconstruction is chosen for this check.");
  if (!saysIceFree(item.constraintKind)) {
    return result(
      CHECK,
      "pass",
      "A maximum-limiting date is expected to be older than deglaciation; no reconstruction test applies.",
    );
  }
  if (!item.calendar) return result(CHECK, "pass", "No calendar age to compare with the reconstruction.");
  const where = local(item);
  if (where.kind === "never-covered") {
    return result(
      CHECK,
      "pass",
      `The site lies outside ${recon.name}'s ice at its oldest isochrone (${yr(where.oldestCalBp)} cal BP).`,
      {
        reconstruction: recon.name,
      },
    );
  }
  const p = probabilityUnderIce(item, where);
  const details = {
    reconstruction: recon.name,
    pUnderIce: p,
    deglaciationCalBp: where.ageCalBp,
    deglaciationSdYr: where.sdYears,
    uncertaintyYr: recon.uncertaintyYr,
    medianCalBp: item.calendar.medianCalBp,
  };
  const text = `P(site still under ice at this age) = ${prob(p)} by ${recon.name}, which frees the site at ${yr(where.ageCalBp)} ± ${yr(where.sdYears)} cal BP; the date's median is ${yr(item.calendar.medianCalBp)} cal BP.`;
  if (p >= RECON_CONFLICT)
    return result(
      CHECK,
      "conflict",
      text,
      details,
      item.method === "luminescence" ? "partial_bleaching" : item.marineMaterial ? "reworked" : "old_carbon",
    );
  if (p >= RECON_WARNING) return result(CHECK, "warning", text, details);
  if (p >= RECON_NOTE) return result(CHECK, "note", text, details);
  return result(CHECK, "pass", text, details);
}

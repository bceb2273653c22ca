// Loads determinations as the checks see them (site, sample, material, current calendar
// density) and the reconstruction the check uses. Withdrawn determinations are not in the
// registry for the checks.

import type { Db } from "#app/db/client.server.ts";
import type { Method, ConstraintKind } from "#app/db/schema.ts";
import { densityMoments, type CheckItem } from "#app/science/checks/types.ts";
import { makeReconstruction, type Reconstruction } from "#app/science/checks/reconstruction.ts";
import { parseReconstruction } from "#app/science/checks/reconstruction-file.ts";
import type { DoseRateFields } from "#app/science/dose-rate-fields.ts";
import { decodeDensity } from "#app/models/calibration/calibrations.server.ts";

interface Row {
  id: number;
  lab_code: string;
  lab_id: number;
  method: Method;
  constraint_kind: ConstraintKind;
  sample_id: number;
  site_id: number;
  latitude: number;
  longitude: number;
  material: string;
  marine: number;
  depth_cm: number | null;
  strat_unit: string | null;
  strat_order: number | null;
  grade: number | null;
  c14_age_yr: number | null;
  c14_error_yr: number | null;
  f14c: number | null;
  f14c_error: number | null;
  is_limit: number;
  curve_name: string | null;
  delta_r_yr: number | null;
  delta_r_error_yr: number | null;
  delta_r_curve: string | null;
  de_gy: number | null;
  de_error_gy: number | null;
  dose_rate_gy_per_ka: number | null;
  dose_rate_error_gy_per_ka: number | null;
  measurement_year: number | null;
  median_cal_bp: number | null;
  density_start_cal_bp: number | null;
  density: Buffer | null;
  cal_error: string | null;
  signal: string | null;
  mineral: string | null;
  k_percent: number | null;
  u_ppm: number | null;
  th_ppm: number | null;
  water_content_fraction: number | null;
  grain_size_um: number | null;
  grain_use: string | null;
  a_value: number | null;
  internal_k_percent: number | null;
  burial_depth_m: number | null;
  density_g_per_cm3: number | null;
  lab_cosmic_gy_per_ka: number | null;
}

const SELECT = `
  select d.id, d.lab_code, d.lab_id, d.method, d.constraint_kind, d.sample_id, s.site_id, st.latitude, st.longitude,
    s.material, coalesce(m.marine, 0) as marine, s.depth_cm, s.strat_unit, s.strat_order, d.grade,
    d.c14_age_yr, d.c14_error_yr, d.f14c, d.f14c_error, d.is_limit, d.curve_name, d.delta_r_yr, d.delta_r_error_yr,
    d.delta_r_curve, d.de_gy, d.de_error_gy, d.dose_rate_gy_per_ka, d.dose_rate_error_gy_per_ka, d.measurement_year,
    c.median_cal_bp, c.density_start_cal_bp, c.density, c.error as cal_error,
    d.signal, d.mineral, d.k_percent, d.u_ppm, d.th_ppm, d.water_content_fraction, d.grain_size_um, d.grain_use,
    d.a_value, d.internal_k_percent, d.burial_depth_m, d.density_g_per_cm3, d.lab_cosmic_gy_per_ka
  from determinations d
  join samples s on s.id = d.sample_id
  join sites st on st.id = s.site_id
  left join materials m on m.name = s.material
  left join calibrations c on c.determination_id = d.id and c.is_current = 1
  where d.status != 'withdrawn'`;

function toItem(r: Row): CheckItem {
  let calendar: CheckItem["calendar"] = null;
  if (r.density && r.density_start_cal_bp !== null && r.median_cal_bp !== null) {
    const density = decodeDensity(r.density, r.density_start_cal_bp);
    const m = densityMoments(density);
    calendar = { density, medianCalBp: r.median_cal_bp, meanCalBp: m.mean, sdYears: Math.max(m.sd, 1) };
  }
  return {
    id: r.id,
    labCode: r.lab_code,
    labId: r.lab_id,
    method: r.method,
    constraintKind: r.constraint_kind,
    sampleId: r.sample_id,
    siteId: r.site_id,
    latitude: r.latitude,
    longitude: r.longitude,
    material: r.material,
    marineMaterial: r.marine === 1,
    depthCm: r.depth_cm,
    stratUnit: r.strat_unit,
    stratOrder: r.strat_order,
    grade: r.grade,
    c14AgeYr: r.c14_age_yr,
    c14ErrorYr: r.c14_error_yr,
    f14c: r.f14c,
    f14cError: r.f14c_error,
    isLimit: r.is_limit === 1,
    curveName: r.curve_name,
    deltaRYr: r.delta_r_yr,
    deltaRErrorYr: r.delta_r_error_yr,
    deltaRCurve: r.delta_r_curve,
    deGy: r.de_gy,
    deErrorGy: r.de_error_gy,
    doseRateGyPerKa: r.dose_rate_gy_per_ka,
    doseRateErrorGyPerKa: r.dose_rate_error_gy_per_ka,
    measurementYear: r.measurement_year,
    calendar,
    calibrationError: r.cal_error,
    doseRateFields: r.method === "luminescence" && r.k_percent !== null ? doseRateFieldsOf(r) : null,
  };
}

/** The stored inputs the dose-rate warnings read (the same reading as the form's). */
function doseRateFieldsOf(r: Row): DoseRateFields {
  return {
    signal: r.signal,
    mineral: r.mineral,
    kPercent: r.k_percent,
    uPpm: r.u_ppm,
    thPpm: r.th_ppm,
    waterContentFraction: r.water_content_fraction,
    grainSizeUm: r.grain_size_um,
    grainUse: r.grain_use,
    aValue: r.a_value,
    internalKPercent: r.internal_k_percent,
    burialDepthM: r.burial_depth_m,
    densityGPerCm3: r.density_g_per_cm3,
    labCosmicGyPerKa: r.lab_cosmic_gy_per_ka,
  };
}

export interface Bounds {
  west: number;
  east: number;
  south: number;
  north: number;
}

/** Every determination in the registry, or those whose site lies inside the bounds. */
export function loadCheckItems(db: Db, bounds?: Bounds): CheckItem[] {
  const sqlite = db.$client;
  const rows = bounds
    ? (sqlite
        .prepare(`${SELECT} and st.latitude between ? and ? and st.longitude between ? and ?`)
        .all(bounds.south, bounds.north, bounds.west, bounds.east) as Row[])
    : (sqlite.prepare(SELECT).all() as Row[]);
  return rows.map(toItem);
}

export function loadCheckItemsById(db: Db, ids: readonly number[]): CheckItem[] {
  if (ids.length === 0) return [];
  const out: CheckItem[] = [];
  const sqlite = db.$client;
  for (let i = 0; i < ids.length; i += 500) {
    const chunk = ids.slice(i, i + 500);
    const rows = sqlite.prepare(`${SELECT} and d.id in (${chunk.map(() => "?").join(",")})`).all(...chunk) as Row[];
    for (const r of rows) out.push(toItem(r));
  }
  return out;
}

export function loadAllLabCodes(db: Db): { id: number; labCode: string }[] {
  return db.$client.prepare("select id, lab_code as labCode from determinations where status != 'withdrawn'").all() as {
    id: number;
    labCode: string;
  }[];
}

/** Used when a reconstruction states no uncertainty of its own (years). */
export const DEFAULT_RECONSTRUCTION_UNCERTAINTY_YR = 500;

/** The reconstruction chosen for the check, ready for point tests; null when none is chosen. */
export function loadCheckReconstruction(db: Db): Reconstruction | null {
  const row = db.$client
    .prepare("select name, geojson, uncertainty_yr from reconstructions where used_for_checks = 1 order by id desc limit 1")
    .get() as { name: string; geojson: string; uncertainty_yr: number | null } | undefined;
  if (!row) return null;
  const parsed = parseReconstruction(JSON.parse(row.geojson));
  if (!parsed.ok) return null;
  return makeReconstruction(
    row.name,
    row.uncertainty_yr ?? parsed.statedUncertaintyYr ?? DEFAULT_RECONSTRUCTION_UNCERTAINTY_YR,
    parsed.isochrones,
  );
}

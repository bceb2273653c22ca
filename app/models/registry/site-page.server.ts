import type { Db } from "#app/db/client.server.ts";
import { LISTED_MEASUREMENT_SQL, MEASURED_AGE_SQL, type ListedMeasurement } from "#app/models/registry/query.server.ts";

/*
 * The site page: the site, and every sample with its determinations in stratigraphic order
 * (order in the column, then depth), each with its current calibration. Two queries.
 */

export type SiteDeterminationRow = {
  sampleId: number;
  fieldCode: string;
  material: string;
  depthCm: number | null;
  stratUnit: string | null;
  stratOrder: number | null;
  context: string | null;
  id: number | null;
  labCode: string | null;
  method: string | null;
  signal: string | null;
  constraintKind: string | null;
  status: string | null;
  grade: number | null;
} & ListedMeasurement & {
    measuredAgeYr: number | null;
    medianCalBp: number | null;
    hpd95FromBp: number | null;
    hpd95ToBp: number | null;
  };

export function siteDetail(db: Db, id: number) {
  const site = db.$client
    .prepare(
      `select t.id, t.name, t.latitude, t.longitude, t.elevation_m as elevationM,
         t.location_uncertainty_m as locationUncertaintyM, t.setting, t.region, t.notes,
         t.created_at as createdAt, u.name as createdByName
       from sites t left join users u on u.id = t.created_by where t.id = ?`,
    )
    .get(id) as
    | {
        id: number;
        name: string;
        latitude: number;
        longitude: number;
        elevationM: number | null;
        locationUncertaintyM: number | null;
        setting: string | null;
        region: string | null;
        notes: string | null;
        createdAt: number;
        createdByName: string | null;
      }
    | undefined;
  if (!site) return null;

  // Samples without a determination still appear (left join), so the column is complete.
  const raw = db.$client
    .prepare(
      `select s.id as sampleId, s.field_code as fieldCode, s.material, s.depth_cm as depthCm,
         s.strat_unit as stratUnit, s.strat_order as stratOrder, s.context,
         d.id, d.lab_code as labCode, d.method, d.signal, d.constraint_kind as constraintKind, d.status, d.grade,
         ${LISTED_MEASUREMENT_SQL},
         ${MEASURED_AGE_SQL} as measuredAgeYr,
         c.median_cal_bp as medianCalBp, c.hpd95_from_bp as hpd95FromBp, c.hpd95_to_bp as hpd95ToBp
       from samples s
       left join determinations d on d.sample_id = s.id
       left join calibrations c on c.determination_id = d.id and c.is_current = 1
       where s.site_id = ?
       order by s.strat_order is null, s.strat_order, s.depth_cm is null, s.depth_cm, s.field_code, d.lab_code`,
    )
    .all(id) as (Omit<SiteDeterminationRow, "isLimit"> & { isLimit: number | null })[];
  const rows: SiteDeterminationRow[] = raw.map((r) => ({ ...r, isLimit: r.isLimit === 1 }));

  const determinationCount = rows.filter((r) => r.id != null).length;
  const sampleCount = new Set(rows.map((r) => r.sampleId)).size;
  return { site, rows, determinationCount, sampleCount };
}

export type SiteDetail = NonNullable<ReturnType<typeof siteDetail>>;

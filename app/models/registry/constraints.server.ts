// Which determinations a constraint-set filter selects, and how many: the live count of the
// /constraints page, the downloads, the API and publishing all ask here. Built from the same SQL
// pieces as Explore (conditions.server.ts). One statement, plus a point-in-polygon pass for a region.
import booleanPointInPolygon from "@turf/boolean-point-in-polygon";
import type { Db } from "#app/db/client.server.ts";
import { Conditions, CURRENT_CALIBRATION_JOIN, NOT_WITHDRAWN_SQL } from "#app/models/registry/conditions.server.ts";
import { regionGeometry, severitiesWorseThan, type ConstraintFilter, type RegionGeometry } from "#app/utils/constraint-filter.ts";

/** Bounding box of a GeoJSON region, [W, S, E, N], for the SQL pre-filter. */
function geometryBbox(g: RegionGeometry): [number, number, number, number] {
  const polys = g.type === "Polygon" ? [g.coordinates] : g.coordinates;
  let [w, s, e, n] = [Infinity, Infinity, -Infinity, -Infinity];
  for (const poly of polys)
    for (const ring of poly)
      for (const [x, y] of ring) {
        w = Math.min(w, x!);
        e = Math.max(e, x!);
        s = Math.min(s, y!);
        n = Math.max(n, y!);
      }
  return [w, s, e, n];
}

/**
 * The conditions of a filter. Only determinations that are not withdrawn and have a current
 * calendar age are constraints. The time window (cal BP, either order) keeps a determination
 * whose 95.4 % range overlaps it, or with time_mode=median whose median lies in it.
 */
export function constraintConditions(f: ConstraintFilter): Conditions {
  const w = new Conditions().add(NOT_WITHDRAWN_SQL).add("c.median_cal_bp is not null");
  const region = regionGeometry(f);
  for (const box of [f.bbox, region ? geometryBbox(region) : undefined]) {
    if (box) w.window("t.longitude", box[0], box[2]).window("t.latitude", box[1], box[3]);
  }
  if (f.time_mode === "median") w.window("c.median_cal_bp", f.from_cal_bp, f.to_cal_bp);
  else {
    // Overlap: the range's oldest bound is not younger than the window, its youngest not older.
    const [young, old] = [f.from_cal_bp, f.to_cal_bp].every((v) => v != null)
      ? [Math.min(f.from_cal_bp!, f.to_cal_bp!), Math.max(f.from_cal_bp!, f.to_cal_bp!)]
      : [f.from_cal_bp, f.to_cal_bp];
    if (young != null) w.add("c.hpd95_from_bp >= ?", young);
    if (old != null) w.add("c.hpd95_to_bp <= ?", old);
  }
  w.anyOf("d.method", f.methods).anyOf("s.material", f.materials).anyOf("d.constraint_kind", f.kinds).minGrade(f.min_grade);
  if (f.exclude_flags) {
    w.add(
      `not exists (select 1 from reviews r, json_each(r.flags) fl
         where r.id = (select max(id) from reviews where determination_id = d.id)
           and fl.value in (${f.exclude_flags.map(() => "?").join(",")}))`,
      ...f.exclude_flags,
    );
  }
  const worse = f.worst_check ? severitiesWorseThan(f.worst_check) : [];
  if (worse.length > 0) {
    w.add(
      `not exists (select 1 from check_results k where k.determination_id = d.id and k.severity in (${worse.map(() => "?").join(",")}))`,
      ...worse,
    );
  }
  if (f.curve) w.add("c.curve_id in (select id from curves where name = ?)", f.curve);
  return w;
}

const SELECTION_FROM = `from determinations d
  join samples s on s.id = d.sample_id
  join sites t on t.id = s.site_id
  join ${CURRENT_CALIBRATION_JOIN}`;

/** Ids of the selected determinations, ascending. */
export function selectionIds(db: Db, f: ConstraintFilter): number[] {
  const w = constraintConditions(f);
  const region = regionGeometry(f);
  const sql = `select d.id, t.longitude as lon, t.latitude as lat ${SELECTION_FROM} ${w.where} order by d.id`;
  const rows = db.$client.prepare(sql).all(...w.params) as { id: number; lon: number; lat: number }[];
  if (!region) return rows.map((r) => r.id);
  return rows.filter((r) => booleanPointInPolygon([r.lon, r.lat], region)).map((r) => r.id);
}

/** How many determinations the filter selects (the live count). */
export function selectionCount(db: Db, f: ConstraintFilter): number {
  if (regionGeometry(f)) return selectionIds(db, f).length;
  const w = constraintConditions(f);
  return (db.$client.prepare(`select count(*) as n ${SELECTION_FROM} ${w.where}`).get(...w.params) as { n: number }).n;
}

/** The choices the filter form offers: every material and every curve name in the registry. */
export function constraintFilterChoices(db: Db): { materials: string[]; curves: string[] } {
  return {
    materials: db.$client.prepare("select distinct material from samples order by material").pluck().all() as string[],
    curves: db.$client.prepare("select distinct name from curves order by name").pluck().all() as string[],
  };
}

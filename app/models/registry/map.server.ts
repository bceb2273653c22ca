import type { Feature, FeatureCollection } from "geojson";
import type { Db } from "#app/db/client.server.ts";
import { MEASURED_AGE_SQL } from "#app/models/registry/query.server.ts";
import type { MapSite } from "#app/utils/map-site.ts";

/*
 * Data for the map: one compact row per site, and the demo margin reconstruction's isochrones.
 * A site's age is its deglaciation age: the median of its minimum-limiting and direct dates'
 * ages (calibrated median, else measured age), leaving out rejected dates and greater-than limits
 * when anything else is left. Maximum-limiting dates (ice advanced after them) and withdrawn ones
 * never count towards it; a site dated only by those has no age on the map.
 */

export type { MapSite };

function median(sorted: number[]): number | null {
  if (sorted.length === 0) return null;
  const mid = sorted.length >> 1;
  return sorted.length % 2 ? sorted[mid]! : (sorted[mid - 1]! + sorted[mid]!) / 2;
}

export function mapSites(db: Db): MapSite[] {
  // One pass over the determinations; the per-site summary is cheaper in JS than in SQL.
  const rows = db.$client
    .prepare(
      `select t.id as siteId, t.name, t.latitude as lat, t.longitude as lon, d.grade,
         coalesce(c.median_cal_bp, ${MEASURED_AGE_SQL}) as age,
         case when d.constraint_kind = 'maximum' then 2 when d.grade = 0 or d.is_limit = 1 then 1 else 0 end as weak
       from determinations d
       join samples s on s.id = d.sample_id
       join sites t on t.id = s.site_id
       left join calibrations c on c.determination_id = d.id and c.is_current = 1
       where d.status != 'withdrawn'`,
    )
    .all() as {
    siteId: number;
    name: string;
    lat: number;
    lon: number;
    grade: number | null;
    age: number | null;
    weak: number;
  }[];

  type Acc = {
    id: number;
    name: string;
    lat: number;
    lon: number;
    n: number;
    grade: number | null;
    good: number[];
    weak: number[];
  };
  const bySite = new Map<number, Acc>();
  for (const r of rows) {
    let acc = bySite.get(r.siteId);
    if (!acc) {
      acc = { id: r.siteId, name: r.name, lat: r.lat, lon: r.lon, n: 0, grade: null, good: [], weak: [] };
      bySite.set(r.siteId, acc);
    }
    acc.n += 1;
    if (r.grade != null && (acc.grade == null || r.grade > acc.grade)) acc.grade = r.grade;
    // Maximum-limiting dates say when ice advanced over the site, not when it left: no deglaciation age.
    if (r.age != null && r.weak !== 2) (r.weak ? acc.weak : acc.good).push(r.age);
  }

  return [...bySite.values()]
    .sort((a, b) => a.id - b.id)
    .map((acc) => {
      const list = (acc.good.length ? acc.good : acc.weak).sort((a, b) => a - b);
      const med = median(list);
      return {
        id: acc.id,
        name: acc.name,
        lat: Math.round(acc.lat * 1e5) / 1e5,
        lon: Math.round(acc.lon * 1e5) / 1e5,
        n: acc.n,
        min: list.length ? Math.round(list[0]!) : null,
        med: med == null ? null : Math.round(med),
        grade: acc.grade,
      };
    });
}

export type Isochrones = { id: number; name: string; features: Feature[]; ages: number[] };

/** The newest demo reconstruction's isochrones, each with a numeric age_cal_bp; null when there is none. */
export function demoIsochrones(db: Db): Isochrones | null {
  const row = db.$client
    .prepare("select id, name, geojson from reconstructions where is_demo = 1 order by id desc limit 1")
    .get() as { id: number; name: string; geojson: string } | undefined;
  if (!row) return null;
  let collection: FeatureCollection;
  try {
    collection = JSON.parse(row.geojson) as FeatureCollection;
  } catch {
    return null;
  }
  const features = (collection.features ?? []).filter((f) => f.geometry && Number.isFinite(Number(f.properties?.age_cal_bp)));
  const ages = [...new Set(features.map((f) => Number(f.properties!.age_cal_bp)))].sort((a, b) => a - b);
  return { id: row.id, name: row.name, features, ages };
}

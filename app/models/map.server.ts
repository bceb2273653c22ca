import type { Feature, FeatureCollection } from "geojson";
import type { Db } from "#app/db/client.server.ts";
import { MEASURED_AGE_SQL } from "#app/models/explore.server.ts";

/*
 * Data for the map: one compact row per site, and the demo margin reconstruction's isochrones.
 * A site's age is the median of its dates' ages (calibrated median, else measured age), leaving
 * out rejected dates and greater-than limits when anything else is left; withdrawn never count.
 */

export type MapSite = {
  id: number;
  name: string;
  lat: number;
  lon: number;
  /** Determinations at the site (not withdrawn). */
  n: number;
  /** Youngest and median age in years BP (cal BP where calibrated); null when nothing is dated. */
  min: number | null;
  med: number | null;
  /** Best reliability grade at the site; null when none is graded. */
  grade: number | null;
};

function median(sorted: number[]): number | null {
  if (sorted.length === 0) return null;
  const mid = sorted.length >> 1;
  return sorted.length % 2 ? sorted[mid]! : (sorted[mid - 1]! + sorted[mid]!) / 2;
}

export function mapSites(db: Db): MapSite[] {
  const sites = db.$client
    .prepare(
      `select t.id, t.name, t.latitude as lat, t.longitude as lon,
         count(d.id) as n, max(d.grade) as grade
       from sites t
       join samples s on s.site_id = t.id
       join determinations d on d.sample_id = s.id and d.status != 'withdrawn'
       group by t.id
       order by t.id`,
    )
    .all() as { id: number; name: string; lat: number; lon: number; n: number; grade: number | null }[];

  const ages = db.$client
    .prepare(
      `select s.site_id as siteId, coalesce(c.median_cal_bp, ${MEASURED_AGE_SQL}) as age,
         (d.grade = 0 or d.is_limit = 1) as weak
       from determinations d
       join samples s on s.id = d.sample_id
       left join calibrations c on c.determination_id = d.id and c.is_current = 1
       where d.status != 'withdrawn'`,
    )
    .all() as { siteId: number; age: number | null; weak: number }[];

  const bySite = new Map<number, { good: number[]; weak: number[] }>();
  for (const a of ages) {
    if (a.age == null) continue;
    let entry = bySite.get(a.siteId);
    if (!entry) bySite.set(a.siteId, (entry = { good: [], weak: [] }));
    (a.weak ? entry.weak : entry.good).push(a.age);
  }

  // Sorting per site in JS is cheaper than ordering the joined rows in SQL.
  for (const entry of bySite.values()) {
    entry.good.sort((a, b) => a - b);
    entry.weak.sort((a, b) => a - b);
  }

  return sites.map((s) => {
    const entry = bySite.get(s.id);
    const list = entry ? (entry.good.length ? entry.good : entry.weak) : [];
    const med = median(list);
    return {
      id: s.id,
      name: s.name,
      lat: Math.round(s.lat * 1e5) / 1e5,
      lon: Math.round(s.lon * 1e5) / 1e5,
      n: s.n,
      min: list.length ? Math.round(list[0]!) : null,
      med: med == null ? null : Math.round(med),
      grade: s.grade,
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
  const features = (collection.features ?? []).filter(
    (f) => f.geometry && Number.isFinite(Number(f.properties?.age_cal_bp)),
  );
  const ages = [...new Set(features.map((f) => Number(f.properties!.age_cal_bp)))].sort((a, b) => a - b);
  return { id: row.id, name: row.name, features, ages };
}

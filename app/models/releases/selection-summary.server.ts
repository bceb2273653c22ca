// What the /constraints page shows of a selection besides its count: the summed calendar density
// by grade and the selected sites on the map.
import type { Db } from "#app/db/client.server.ts";
import { decodeDensity } from "#app/models/calibration/calibrations.server.ts";
import { selectionIds } from "#app/models/registry/constraints.server.ts";
import { sumDensities, type SummedDensity } from "#app/science/summed-density.ts";
import type { ConstraintFilter } from "#app/utils/constraint-filter.ts";
import type { MapSite } from "#app/utils/map-site.ts";

export type SelectionSummary = { count: number; density: SummedDensity; sites: MapSite[] };

const CHUNK = 900;

/** Count, summed density (50-year bins) and per-site map marks of what the filter selects. */
export function selectionSummary(db: Db, filter: ConstraintFilter, step = 50): SelectionSummary {
  const ids = selectionIds(db, filter);
  const items: { density: ReturnType<typeof decodeDensity>; grade: number | null }[] = [];
  const bySite = new Map<number, MapSite & { ages: number[] }>();
  for (let i = 0; i < ids.length; i += CHUNK) {
    const chunk = ids.slice(i, i + CHUNK);
    const rows = db.$client
      .prepare(
        `select d.grade, c.density, c.density_start_cal_bp as start, c.median_cal_bp as median,
           t.id as siteId, t.name as siteName, t.latitude as lat, t.longitude as lon
         from determinations d join samples s on s.id = d.sample_id join sites t on t.id = s.site_id
         join calibrations c on c.determination_id = d.id and c.is_current = 1
         where d.id in (${chunk.map(() => "?").join(",")})`,
      )
      .all(...chunk) as {
      grade: number | null;
      density: Buffer | null;
      start: number | null;
      median: number;
      siteId: number;
      siteName: string;
      lat: number;
      lon: number;
    }[];
    for (const r of rows) {
      if (r.density && r.start != null) items.push({ density: decodeDensity(r.density, r.start), grade: r.grade });
      const site = bySite.get(r.siteId) ?? {
        id: r.siteId,
        name: r.siteName,
        lat: r.lat,
        lon: r.lon,
        n: 0,
        min: null,
        med: null,
        grade: null,
        ages: [],
      };
      site.n++;
      site.ages.push(r.median);
      if (r.grade != null && (site.grade == null || r.grade > site.grade)) site.grade = r.grade;
      bySite.set(r.siteId, site);
    }
  }
  const sites = [...bySite.values()].map(({ ages, ...s }) => {
    ages.sort((a, b) => a - b);
    return { ...s, min: ages[0] ?? null, med: ages.length ? ages[Math.floor(ages.length / 2)]! : null };
  });
  return { count: ids.length, density: sumDensities(items, { step }), sites };
}

import { getDb } from "#app/db/client.server.ts";

export function registryTotals() {
  const db = getDb();
  const row = db.$client
    .prepare(
      `select
         (select count(*) from determinations where status != 'withdrawn') as determinations,
         (select count(*) from determinations where status != 'withdrawn' and method = 'radiocarbon') as radiocarbon,
         (select count(*) from determinations where status != 'withdrawn' and method = 'luminescence') as luminescence,
         (select count(*) from determinations where grade is not null and status != 'withdrawn') as graded,
         (select count(*) from sites) as sites,
         (select count(*) from labs) as labs`,
    )
    .get() as Record<string, number>;
  return row as {
    determinations: number;
    radiocarbon: number;
    luminescence: number;
    graded: number;
    sites: number;
    labs: number;
  };
}

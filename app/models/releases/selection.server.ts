// Each selected determination as a constraint item: the shape of the API, the downloads and a
// release's frozen items. Which determinations a filter selects is the registry's
// (models/registry/constraints.server.ts); rows are read in chunks, no per-row queries.
import type { Statement } from "better-sqlite3";
import type { Db } from "#app/db/client.server.ts";
import type { HpdRange } from "#app/db/schema.ts";
import { CURRENT_CALIBRATION_JOIN } from "#app/models/registry/conditions.server.ts";
import { gradeWord } from "#app/utils/labels.ts";

const placeholders = (n: number) => Array.from({ length: n }, () => "?").join(",");

export type CheckSummary = { check: string; severity: string };

/** One constraint: what the API answers, the downloads write and a release freezes. */
export type ConstraintItem = {
  id: number;
  lab_code: string;
  lab: string;
  site_id: number;
  site_name: string;
  latitude: number;
  longitude: number;
  elevation_m: number | null;
  sample_code: string;
  material: string;
  depth_cm: number | null;
  method: string;
  signal: string | null;
  constraint_kind: string;
  grade: number | null;
  grade_name: string;
  flags: string[];
  checks: CheckSummary[];
  worst_check: string | null;
  determination_version: number;
  c14_age: number | null;
  c14_error: number | null;
  f14c: number | null;
  f14c_error: number | null;
  d13c: number | null;
  delta_r: number | null;
  delta_r_error: number | null;
  de_gy: number | null;
  de_error_gy: number | null;
  dose_rate_gy_per_ka: number | null;
  dose_rate_error_gy_per_ka: number | null;
  measurement_year: number | null;
  calibration_curve: string;
  median_cal_bp: number;
  hpd68: HpdRange[];
  hpd95: HpdRange[];
  publication: { citation: string; doi: string | null } | null;
};

/** A row of the items query in column order (read with .raw(): arrays cost far less than objects). */
type RowTuple = [
  id: number,
  lab_code: string,
  lab: string,
  site_id: number,
  site_name: string,
  latitude: number,
  longitude: number,
  elevation_m: number | null,
  sample_code: string,
  material: string,
  depth_cm: number | null,
  method: string,
  signal: string | null,
  constraint_kind: string,
  grade: number | null,
  determination_version: number,
  c14_age: number | null,
  c14_error: number | null,
  f14c: number | null,
  f14c_error: number | null,
  d13c: number | null,
  delta_r: number | null,
  delta_r_error: number | null,
  de_gy: number | null,
  de_error_gy: number | null,
  dose_rate_gy_per_ka: number | null,
  dose_rate_error_gy_per_ka: number | null,
  measurement_year: number | null,
  calibration_id: number,
  curve_id: number | null,
  calibration_curve: string,
  median_cal_bp: number,
  hpd68: string | null,
  hpd95: string | null,
  density_start: number | null,
  density_length: number | null,
  density_sha256: string | null,
  pub_citation: string | null,
  pub_doi: string | null,
];

const WORST: Record<string, number> = { pass: 0, note: 1, warning: 2, conflict: 3 };

/** A determination's checks in the items' order (by check, the worst first) and the worst severity. */
type Checks = { checks: CheckSummary[]; worst: string | null };
const NO_CHECKS: Checks = Object.freeze({ checks: Object.freeze([]) as unknown as CheckSummary[], worst: null });

/**
 * Reads the grouped checks text ("check<TAB>severity" lines). Few combinations recur across a
 * whole registry, so each distinct text is read once per call (`seen`) and its frozen result shared.
 */
function checksOf(text: string | undefined, seen: Map<string, Checks>): Checks {
  if (!text) return NO_CHECKS;
  const known = seen.get(text);
  if (known) return known;
  const checks = text
    .split("\n")
    .map((line) => {
      const tab = line.indexOf("\t");
      return Object.freeze({ check: line.slice(0, tab), severity: line.slice(tab + 1) });
    })
    .sort((a, b) => (a.check === b.check ? WORST[b.severity]! - WORST[a.severity]! : a.check < b.check ? -1 : 1));
  let worst: string | null = null;
  for (const c of checks) if (worst === null || WORST[c.severity]! > WORST[worst]!) worst = c.severity;
  const read: Checks = Object.freeze({ checks: Object.freeze(checks) as CheckSummary[], worst });
  seen.set(text, read);
  return read;
}

/** The latest review's flags, sorted; shared per distinct text like the checks. */
function flagsOf(text: string | undefined, seen: Map<string, string[]>): string[] {
  if (!text) return [];
  let flags = seen.get(text);
  if (!flags) {
    flags = Object.freeze((JSON.parse(text) as string[]).sort()) as string[];
    seen.set(text, flags);
  }
  return flags;
}

function toItem(r: RowTuple, flags: string[], { checks, worst }: Checks): ConstraintItem {
  const [
    id,
    lab_code,
    lab,
    site_id,
    site_name,
    latitude,
    longitude,
    elevation_m,
    sample_code,
    material,
    depth_cm,
    method,
    signal,
    constraint_kind,
    grade,
    determination_version,
    c14_age,
    c14_error,
    f14c,
    f14c_error,
    d13c,
    delta_r,
    delta_r_error,
    de_gy,
    de_error_gy,
    dose_rate_gy_per_ka,
    dose_rate_error_gy_per_ka,
    measurement_year,
    _calibration_id,
    _curve_id,
    calibration_curve,
    median_cal_bp,
    hpd68,
    hpd95,
    _density_start,
    _density_length,
    _density_sha256,
    pub_citation,
    pub_doi,
  ] = r;
  return {
    id,
    lab_code,
    lab,
    site_id,
    site_name,
    latitude,
    longitude,
    elevation_m,
    sample_code,
    material,
    depth_cm,
    method,
    signal,
    constraint_kind,
    grade,
    grade_name: gradeWord(grade),
    flags,
    checks,
    worst_check: worst,
    determination_version,
    c14_age,
    c14_error,
    f14c,
    f14c_error,
    d13c,
    delta_r,
    delta_r_error,
    de_gy,
    de_error_gy,
    dose_rate_gy_per_ka,
    dose_rate_error_gy_per_ka,
    measurement_year,
    calibration_curve,
    median_cal_bp,
    hpd68: hpd68 ? (JSON.parse(hpd68) as HpdRange[]) : [],
    hpd95: hpd95 ? (JSON.parse(hpd95) as HpdRange[]) : [],
    publication: pub_citation == null ? null : { citation: pub_citation, doi: pub_doi },
  };
}

/** Where a selected item's density is, read from the calibration's index entry (never the blob). */
export type DensityInfo = { start: number; length: number; sha256: string | null };

export type SelectedRow = { item: ConstraintItem; calibrationId: number; curveId: number | null; density: DensityInfo | null };

const CHUNK = 900; // below SQLite's bound-parameter limit (densitiesFor)
const ITEM_CHUNK = 2000; // ids per items query (passed as one JSON array)

const ITEMS_SQL = {
  rows: `select d.id, d.lab_code, l.name as lab, t.id as site_id, t.name as site_name, t.latitude, t.longitude,
      t.elevation_m, s.field_code as sample_code, s.material, s.depth_cm, d.method, d.signal, d.constraint_kind,
      d.grade, d.version as determination_version,
      d.c14_age_yr as c14_age, d.c14_error_yr as c14_error, d.f14c, d.f14c_error, d.d13c_permil as d13c,
      d.delta_r_yr as delta_r, d.delta_r_error_yr as delta_r_error, d.de_gy, d.de_error_gy,
      d.dose_rate_gy_per_ka, d.dose_rate_error_gy_per_ka, d.measurement_year,
      c.id as calibration_id, c.curve_id, c.curve_label as calibration_curve, c.median_cal_bp, c.hpd68, c.hpd95,
      c.density_start_cal_bp as density_start, c.density_length, c.density_sha256,
      p.citation as pub_citation, p.doi as pub_doi
    from determinations d
    join samples s on s.id = d.sample_id
    join sites t on t.id = s.site_id
    join labs l on l.id = d.lab_id
    join ${CURRENT_CALIBRATION_JOIN}
    left join publications p on p.id = d.publication_id
    where d.id in (select value from json_each(?))`,
  flags: `select determination_id as id, flags from reviews
    where id in (select max(id) from reviews where determination_id in (select value from json_each(?)) group by determination_id)`,
  // One text per determination ("check<TAB>severity" lines): far fewer values to read than a row per check.
  checks: `select determination_id as id, group_concat("check" || char(9) || severity, char(10)) as checks
    from check_results where determination_id in (select value from json_each(?)) group by determination_id`,
};

type ItemStatements = { [K in keyof typeof ITEMS_SQL]: Statement };
const prepared = new WeakMap<Db["$client"], ItemStatements>();

function itemStatements(db: Db): ItemStatements {
  let st = prepared.get(db.$client);
  if (!st) {
    const prep = (sql: string) => db.$client.prepare(sql).raw(true);
    st = { rows: prep(ITEMS_SQL.rows), flags: prep(ITEMS_SQL.flags), checks: prep(ITEMS_SQL.checks) };
    prepared.set(db.$client, st);
  }
  return st;
}

/**
 * The items for the given ids, in the order given, read in chunks of a couple of thousand: one
 * query for the rows (the calibration read from its covering index), one for the latest review's
 * flags and one for the grouped check results of the chunk, each statement prepared once per connection.
 */
export function* selectionItems(db: Db, ids: readonly number[]): Generator<SelectedRow> {
  const st = itemStatements(db);
  const seenChecks = new Map<string, Checks>();
  const seenFlags = new Map<string, string[]>();
  for (let i = 0; i < ids.length; i += ITEM_CHUNK) {
    const chunk = ids.slice(i, i + ITEM_CHUNK);
    const json = JSON.stringify(chunk);
    const byId = new Map((st.rows.all(json) as RowTuple[]).map((r) => [r[0], r]));
    const flags = new Map(st.flags.all(json) as [number, string][]);
    const checks = new Map(st.checks.all(json) as [number, string][]);
    for (const id of chunk) {
      const r = byId.get(id);
      if (!r) continue;
      const [start, length, sha256] = [r[34], r[35], r[36]];
      const density = start != null && length != null ? { start, length, sha256 } : null;
      const item = toItem(r, flagsOf(flags.get(id), seenFlags), checksOf(checks.get(id), seenChecks));
      yield { item, calibrationId: r[28], curveId: r[29], density };
    }
  }
}

/** The stored density of each calibration (youngest year first), read in chunks. */
export function densitiesFor(db: Db, calibrationIds: readonly number[]): Map<number, { start: number; blob: Buffer }> {
  const out = new Map<number, { start: number; blob: Buffer }>();
  for (let i = 0; i < calibrationIds.length; i += CHUNK) {
    const chunk = calibrationIds.slice(i, i + CHUNK);
    const rows = db.$client
      .prepare(
        `select id, density_start_cal_bp as start, density as blob from calibrations where id in (${placeholders(chunk.length)})`,
      )
      .all(...chunk) as { id: number; start: number | null; blob: Buffer | null }[];
    for (const r of rows) if (r.blob && r.start != null) out.set(r.id, { start: r.start, blob: r.blob });
  }
  return out;
}

/** An error naming `curve` when no curve of that name is stored, else null. */
export function knownCurveError(db: Db, curve: string): string | null {
  const names = (db.$client.prepare("select distinct name from curves order by name").all() as { name: string }[]).map(
    (r) => r.name,
  );
  return names.includes(curve) ? null : `curve: no curve named "${curve.slice(0, 40)}" (known: ${names.join(", ")})`;
}

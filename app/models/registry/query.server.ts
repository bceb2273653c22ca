import { z } from "zod";
import type { Db } from "#app/db/client.server.ts";
import { Conditions, CURRENT_CALIBRATION_JOIN, NOT_WITHDRAWN_SQL } from "#app/models/registry/conditions.server.ts";
import { cachedRead } from "#app/models/registry/read-cache.server.ts";
import { prepared } from "#app/db/prepared.server.ts";
import { CHECK_SEVERITIES, CONSTRAINT_KINDS, METHODS, STATUSES, type CheckSeverity } from "#app/db/schema.ts";
import { escapeLike } from "#app/utils/sql-like.ts";
import {
  defaultDirection,
  EXPLORE_PAGE_SIZE,
  EXPLORE_SORTS,
  GRADE_FILTERS,
  STATUS_FILTERS,
  type ExploreSort,
} from "#app/utils/explore-filters.ts";

export { EXPLORE_PAGE_SIZE };

/*
 * The Explore query: one filtered, sorted page of determinations plus its total count.
 * The same filters serve the Explore page and the JSON API, so they are parsed from URL
 * search parameters here. Everything is two SQL statements (page rows, count); no per-row queries.
 */

const blankToUndefined = (v: unknown) => (typeof v === "string" && v.trim() === "" ? undefined : v);
const text = (max: number) => z.preprocess(blankToUndefined, z.string().trim().max(max).optional());
const years = z.preprocess(blankToUndefined, z.coerce.number().min(-100).max(10_000_000).optional());

export const exploreFiltersSchema = z.object({
  method: z.preprocess(blankToUndefined, z.enum(METHODS).optional()),
  material: text(100),
  lab: z.preprocess(blankToUndefined, z.coerce.number().int().positive().optional()),
  site: text(200),
  kind: z.preprocess(blankToUndefined, z.enum(CONSTRAINT_KINDS).optional()),
  status: z.preprocess(blankToUndefined, z.enum(STATUS_FILTERS).optional()),
  grade: z.preprocess(blankToUndefined, z.enum(GRADE_FILTERS).optional()),
  /** The worst result among a determination's automatic checks. */
  worst_check: z.preprocess(blankToUndefined, z.enum(CHECK_SEVERITIES).optional()),
  /** Measured age window in years: ¹⁴C years BP, or luminescence years (De / dose rate). Kept for the API. */
  ageFrom: years,
  ageTo: years,
  /** Radiocarbon ages only, ¹⁴C yr BP. */
  c14From: years,
  c14To: years,
  /** Luminescence ages only, ka (thousands of years before measurement). */
  lumFrom: z.preprocess(blankToUndefined, z.coerce.number().min(0).max(10_000).optional()),
  lumTo: z.preprocess(blankToUndefined, z.coerce.number().min(0).max(10_000).optional()),
  /** Window on the current calibration's median, cal BP. */
  calFrom: years,
  calTo: years,
  /** Free text: lab code or site name contains. */
  q: text(200),
  sort: z.preprocess(blankToUndefined, z.enum(EXPLORE_SORTS).default("created")),
  dir: z.preprocess(blankToUndefined, z.enum(["asc", "desc"]).optional()),
  page: z.preprocess(blankToUndefined, z.coerce.number().int().min(1).max(100_000).default(1)),
});

export type ExploreFilters = z.infer<typeof exploreFiltersSchema>;

/** What each filter parameter takes, in words, for the API's 400 answers (after "give"). */
export const EXPLORE_PARAMETER_HINTS: Readonly<Record<string, string>> = {
  method: `one of ${METHODS.join(", ")}`,
  lab: "a lab's id (a whole number above 0)",
  kind: `one of ${CONSTRAINT_KINDS.join(", ")}`,
  status: `one of ${STATUS_FILTERS.join(", ")}`,
  grade: `a minimum grade 0, 1, 2 or 3, or "ungraded"`,
  worst_check: `one of ${CHECK_SEVERITIES.join(", ")}`,
  ageFrom: "a measured age in years (¹⁴C yr BP or luminescence years), from −100 to 10,000,000",
  ageTo: "a measured age in years (¹⁴C yr BP or luminescence years), from −100 to 10,000,000",
  c14From: "a radiocarbon age in ¹⁴C yr BP, from −100 to 10,000,000",
  c14To: "a radiocarbon age in ¹⁴C yr BP, from −100 to 10,000,000",
  lumFrom: "a luminescence age in ka, from 0 to 10,000",
  lumTo: "a luminescence age in ka, from 0 to 10,000",
  calFrom: "a calibrated age in years cal BP, from −100 to 10,000,000",
  calTo: "a calibrated age in years cal BP, from −100 to 10,000,000",
  material: "a material name of at most 100 characters",
  site: "part of a site name, at most 200 characters",
  q: "part of a lab code or site name, at most 200 characters",
  sort: `one of ${EXPLORE_SORTS.join(", ")}`,
  dir: "asc or desc",
  page: "a page number from 1 to 100,000",
};

/** Params as a plain object: the first value of each name. */
function paramsObject(params: URLSearchParams): Record<string, string> {
  const out: Record<string, string> = {};
  for (const [k, v] of params) if (!(k in out)) out[k] = v;
  return out;
}

/** Strict parse, for the API: a bad value is an error the caller can report with a 400. */
export function safeParseExploreFilters(params: URLSearchParams) {
  return exploreFiltersSchema.safeParse(paramsObject(params));
}

/**
 * Lenient parse, for the page: a malformed value (a hand-edited URL) is dropped rather than
 * failing the page, so the rest of a shared view still applies.
 */
export function parseExploreFilters(params: URLSearchParams): ExploreFilters {
  const raw = paramsObject(params);
  const strict = exploreFiltersSchema.safeParse(raw);
  if (strict.success) return strict.data;
  const bad = new Set(strict.error.issues.map((i) => String(i.path[0])));
  for (const key of bad) delete raw[key];
  return exploreFiltersSchema.parse(raw);
}

export type ExploreRow = {
  id: number;
  labCode: string;
  siteId: number;
  siteName: string;
  sampleId: number;
  fieldCode: string;
  material: string;
  method: (typeof METHODS)[number];
  signal: string | null;
} & ListedMeasurement & {
    /** ¹⁴C years BP, or luminescence years before measurement; null when not measured. */
    measuredAgeYr: number | null;
    medianCalBp: number | null;
    hpd95FromBp: number | null;
    hpd95ToBp: number | null;
    /** How many disjoint ranges make up the 95.4 % HPD (the span above covers them all). */
    hpd95Parts: number;
    curveLabel: string | null;
    constraintKind: (typeof CONSTRAINT_KINDS)[number];
    grade: number | null;
    /** Worst automatic check result; null before the checks have run. */
    worstCheck: CheckSeverity | null;
    status: (typeof STATUSES)[number];
    labName: string;
    createdAt: number;
  };

export type ExploreResult = {
  rows: ExploreRow[];
  total: number;
  page: number;
  pageCount: number;
  pageSize: number;
};

/** The measurement a list shows for each determination (formatMeasuredAge reads it). */
export type ListedMeasurement = {
  c14AgeYr: number | null;
  c14ErrorYr: number | null;
  f14c: number | null;
  f14cError: number | null;
  isLimit: boolean;
  deGy: number | null;
  deErrorGy: number | null;
  doseRateGyPerKa: number | null;
  doseRateErrorGyPerKa: number | null;
};

/** The columns of a ListedMeasurement from determinations `d`, in SQL; isLimit comes back 0/1 for the caller to turn into a boolean. */
export const LISTED_MEASUREMENT_SQL = `d.c14_age_yr as c14AgeYr, d.c14_error_yr as c14ErrorYr, d.f14c, d.f14c_error as f14cError,
         d.is_limit as isLimit, d.de_gy as deGy, d.de_error_gy as deErrorGy,
         d.dose_rate_gy_per_ka as doseRateGyPerKa, d.dose_rate_error_gy_per_ka as doseRateErrorGyPerKa`;

/** ¹⁴C age (from F14C when only that was given) or luminescence age in years, in SQL. */
export const MEASURED_AGE_SQL = `(case d.method
  when 'radiocarbon' then coalesce(d.c14_age_yr, case when d.f14c > 0 then -8033.0 * ln(d.f14c) end)
  when 'luminescence' then d.de_gy / nullif(d.dose_rate_gy_per_ka, 0) * 1000.0
end)`;

/** The worst check result of determination `d` as 0–3 (pass … conflict), null when it has none. */
export const WORST_CHECK_RANK_SQL = `(select max(case cr.severity when 'conflict' then 3 when 'warning' then 2 when 'note' then 1 else 0 end)
  from check_results cr where cr.determination_id = d.id)`;
const RANK_TO_SEVERITY_SQL = `case ${WORST_CHECK_RANK_SQL} when 3 then 'conflict' when 2 then 'warning' when 1 then 'note' when 0 then 'pass' end`;

const SORT_SQL: Record<ExploreSort, string> = {
  labCode: "d.lab_code",
  site: "t.name",
  age: MEASURED_AGE_SQL,
  cal: "c.median_cal_bp",
  grade: "d.grade",
  created: "d.created_at",
};

/**
 * The narrowest FROM clause a filter and sort need: SQLite does not drop unused joins, and the
 * count and the sort over every matching row are where the time goes.
 */
function narrowFrom(f: ExploreFilters, forSort: boolean): string {
  const needSite = !!(f.site || f.q) || (forSort && f.sort === "site");
  const needSample = needSite || !!f.material;
  const needCal = f.calFrom != null || f.calTo != null || (forSort && f.sort === "cal");
  return [
    "from determinations d",
    needSample ? "join samples s on s.id = d.sample_id" : "",
    needSite ? "join sites t on t.id = s.site_id" : "",
    needCal ? `left join ${CURRENT_CALIBRATION_JOIN}` : "",
  ]
    .filter(Boolean)
    .join("\n  ");
}

const C14_AGE_SQL = "coalesce(d.c14_age_yr, case when d.f14c > 0 then -8033.0 * ln(d.f14c) end)";
const LUMINESCENCE_KA_SQL = "(d.de_gy / nullif(d.dose_rate_gy_per_ka, 0))";

/**
 * The ¹⁴C window (¹⁴C yr BP) selects radiocarbon dates, the luminescence window (ka) luminescence
 * dates; given both, a date in either window is kept (the two scales never share one field).
 */
function measuredWindows(w: Conditions, f: ExploreFilters) {
  const parts: { sql: string; params: unknown[] }[] = [];
  if (f.c14From != null || f.c14To != null) {
    const c = new Conditions().add("d.method = 'radiocarbon'").window(C14_AGE_SQL, f.c14From, f.c14To);
    parts.push({ sql: c.sql, params: c.params });
  }
  if (f.lumFrom != null || f.lumTo != null) {
    const c = new Conditions().add("d.method = 'luminescence'").window(LUMINESCENCE_KA_SQL, f.lumFrom, f.lumTo);
    parts.push({ sql: c.sql, params: c.params });
  }
  if (parts.length) w.add(`(${parts.map((p) => `(${p.sql})`).join(" or ")})`, ...parts.flatMap((p) => p.params));
}

function whereClause(f: ExploreFilters): { sql: string; params: unknown[] } {
  const w = new Conditions()
    .anyOf("d.method", f.method ? [f.method] : undefined)
    .anyOf("s.material", f.material ? [f.material] : undefined)
    .anyOf("d.lab_id", f.lab ? [f.lab] : undefined);
  if (f.site) w.add("t.name like ? escape '\\'", `%${escapeLike(f.site)}%`);
  w.anyOf("d.constraint_kind", f.kind ? [f.kind] : undefined);
  if (!f.status) w.add(NOT_WITHDRAWN_SQL);
  else if (f.status !== "all") w.anyOf("d.status", [f.status]);
  if (f.grade === "ungraded") w.add("d.grade is null");
  else if (f.grade) w.minGrade(Number(f.grade));
  if (f.worst_check) w.add(`${WORST_CHECK_RANK_SQL} = ?`, CHECK_SEVERITIES.indexOf(f.worst_check));
  w.window(MEASURED_AGE_SQL, f.ageFrom, f.ageTo);
  measuredWindows(w, f);
  w.window("c.median_cal_bp", f.calFrom, f.calTo);
  if (f.q) {
    const like = `%${escapeLike(f.q)}%`;
    w.add("(d.lab_code like ? escape '\\' or t.name like ? escape '\\')", like, like);
  }
  return { sql: w.where, params: w.params };
}

export function exploreDeterminations(db: Db, filters: ExploreFilters): ExploreResult {
  const where = whereClause(filters);
  const dir = (filters.dir ?? defaultDirection(filters.sort)) === "asc" ? "asc" : "desc";
  const sortExpr = SORT_SQL[filters.sort];
  // Missing values (uncalibrated, ungraded) always go last, whichever the direction; lab codes and
  // creation times are never missing, and leaving the test out lets an index serve the order.
  const nullsLast = filters.sort === "labCode" || filters.sort === "created" ? "" : `(${sortExpr}) is null, `;
  const orderBy = `order by ${nullsLast}${sortExpr} ${dir}, d.id ${dir}`;

  // The whole order of the selection, as ids, is worked out once per registry version and kept: every
  // page of it (and its count) is then a slice, and only those 50 rows are read in full.
  const order = cachedRead(db, `explore-order:${orderBy}\n${where.sql}\n${JSON.stringify(where.params)}`, () =>
    db.$client
      .prepare(`select d.id ${narrowFrom(filters, true)} ${where.sql} ${orderBy}`)
      .pluck()
      .all(...where.params),
  ) as number[];
  const total = order.length;
  const pageCount = Math.max(1, Math.ceil(total / EXPLORE_PAGE_SIZE));
  const page = Math.min(filters.page, pageCount);
  const pageIds = order.slice((page - 1) * EXPLORE_PAGE_SIZE, page * EXPLORE_PAGE_SIZE);

  const fetched = prepared(
    db,
    `select d.id, d.lab_code as labCode, t.id as siteId, t.name as siteName, s.id as sampleId,
         s.field_code as fieldCode, s.material, d.method, d.signal,
         ${LISTED_MEASUREMENT_SQL},
         ${MEASURED_AGE_SQL} as measuredAgeYr,
         c.median_cal_bp as medianCalBp, c.hpd95_from_bp as hpd95FromBp, c.hpd95_to_bp as hpd95ToBp,
         coalesce(json_array_length(c.hpd95), 0) as hpd95Parts, c.curve_label as curveLabel,
         d.constraint_kind as constraintKind, d.grade, ${RANK_TO_SEVERITY_SQL} as worstCheck,
         d.status, l.name as labName, d.created_at as createdAt
       from determinations d
       join samples s on s.id = d.sample_id
       join sites t on t.id = s.site_id
       join labs l on l.id = d.lab_id
       left join calibrations c on c.determination_id = d.id and c.is_current = 1
       where d.id in (select value from json_each(?))`,
  ).all(JSON.stringify(pageIds)) as (Omit<ExploreRow, "isLimit"> & { isLimit: number })[];
  const position = new Map(pageIds.map((id, i) => [id, i]));
  const raw = fetched.sort((a, b) => position.get(a.id)! - position.get(b.id)!);

  return {
    rows: raw.map((r) => ({ ...r, isLimit: r.isLimit === 1 })),
    total,
    page,
    pageCount,
    pageSize: EXPLORE_PAGE_SIZE,
  };
}

/** Choices for the filter form: labs and the materials in use. */
export function exploreFilterOptions(db: Db) {
  const labs = db.$client.prepare("select id, name, code_prefix as codePrefix from labs order by name").all() as {
    id: number;
    name: string;
    codePrefix: string;
  }[];
  const materials = (db.$client.prepare("select name from materials order by name").all() as { name: string }[]).map(
    (m) => m.name,
  );
  return { labs, materials };
}

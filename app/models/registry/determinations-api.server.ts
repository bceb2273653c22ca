// GET /api/v1/determinations: the Explore query as JSON for scripts. Same filters, same order
// and the same rows as the Explore page; only the page size is the caller's (up to 500).

import type { Db } from "#app/db/client.server.ts";
import type { HpdRange } from "#app/db/schema.ts";
import { queryIssueMessages } from "#app/utils/query-issues.ts";
import {
  EXPLORE_PARAMETER_HINTS,
  EXPLORE_PAGE_SIZE,
  exploreDeterminations,
  safeParseExploreFilters,
  type ExploreFilters,
} from "#app/models/registry/query.server.ts";

export const API_DEFAULT_PER_PAGE = 100;
export const API_MAX_PER_PAGE = 500;

export type ApiQuery = { filters: ExploreFilters; perPage: number };

/** Strict: a malformed parameter is a 400 naming it, never silently dropped. */
export function parseApiQuery(params: URLSearchParams): { ok: true; query: ApiQuery } | { ok: false; errors: string[] } {
  const errors: string[] = [];
  const parsed = safeParseExploreFilters(params);
  if (!parsed.success) errors.push(...queryIssueMessages(parsed.error, Object.fromEntries(params), EXPLORE_PARAMETER_HINTS));
  let perPage = API_DEFAULT_PER_PAGE;
  const raw = params.get("per_page");
  if (raw !== null && raw.trim() !== "") {
    const n = Number(raw);
    if (!Number.isInteger(n) || n < 1 || n > API_MAX_PER_PAGE) {
      errors.push(`per_page: give a whole number from 1 to ${API_MAX_PER_PAGE} (got "${raw.slice(0, 20)}").`);
    } else perPage = n;
  }
  if (errors.length > 0 || !parsed.success) return { ok: false, errors };
  return { ok: true, query: { filters: parsed.data, perPage } };
}

export type ApiDetermination = {
  id: number;
  lab_code: string;
  lab: { id: number; name: string };
  site: { id: number; name: string; latitude: number; longitude: number; elevation_m: number | null };
  sample_code: string;
  material: string;
  depth_cm: number | null;
  strat_unit: string | null;
  method: string;
  constraint_kind: string;
  status: string;
  grade: number | null;
  version: number;
  c14_age: number | null;
  c14_error: number | null;
  f14c: number | null;
  f14c_error: number | null;
  d13c: number | null;
  age_normalised: boolean | null;
  greater_than: boolean | null;
  pretreatment: string | null;
  curve: string | null;
  delta_r: number | null;
  delta_r_error: number | null;
  delta_r_curve: string | null;
  signal: string | null;
  mineral: string | null;
  de_gy: number | null;
  de_error_gy: number | null;
  dose_rate_gy_per_ka: number | null;
  dose_rate_error_gy_per_ka: number | null;
  measurement_year: number | null;
  aliquots: number | null;
  age_model: string | null;
  doi: string | null;
  /** The publication reporting the date; its citation is one line written from the fields (authors, year, title, journal). */
  publication: {
    doi: string | null;
    authors: string | null;
    year: number | null;
    title: string | null;
    journal: string | null;
    citation: string;
  } | null;
  created_at: string;
  updated_at: string;
  calibration: {
    curve: string;
    median_cal_bp: number | null;
    hpd68: HpdRange[];
    hpd95: HpdRange[];
    error: string | null;
  } | null;
};

export type ApiPage = { page: number; per_page: number; total: number; determinations: ApiDetermination[] };

/**
 * The ids of one API page, in Explore's order. Explore serves fixed pages of EXPLORE_PAGE_SIZE;
 * an API page of up to 500 is read from the Explore pages it spans (at most 11), so the filters,
 * sort and tie-breaks stay exactly Explore's.
 */
function pageIds(db: Db, filters: ExploreFilters, perPage: number): { ids: number[]; total: number } {
  const offset = (filters.page - 1) * perPage;
  const firstPage = Math.floor(offset / EXPLORE_PAGE_SIZE) + 1;
  const first = exploreDeterminations(db, { ...filters, page: firstPage });
  // Explore shows its last page for a page past the end; the API answers an empty list instead.
  if (offset >= first.total || first.page !== firstPage) return { ids: [], total: first.total };
  const ids = first.rows.map((r) => r.id).slice(offset - (firstPage - 1) * EXPLORE_PAGE_SIZE);
  for (let p = firstPage + 1; ids.length < perPage && (p - 1) * EXPLORE_PAGE_SIZE < first.total; p++) {
    ids.push(...exploreDeterminations(db, { ...filters, page: p }).rows.map((r) => r.id));
  }
  return { ids: ids.slice(0, perPage), total: first.total };
}

/** A row as the query returns it: the API's own fields as they are, plus the ones toApi reshapes. */
type Joined = Omit<
  ApiDetermination,
  "lab" | "site" | "age_normalised" | "greater_than" | "created_at" | "updated_at" | "calibration" | "publication"
> & {
  pub_id: number | null;
  pub_authors: string | null;
  pub_year: number | null;
  pub_title: string | null;
  pub_journal: string | null;
  pub_citation: string | null;
  lab_id: number;
  lab_name: string;
  site_id: number;
  site_name: string;
  latitude: number;
  longitude: number;
  elevation_m: number | null;
  age_normalised: number;
  is_limit: number;
  created_at: number;
  updated_at: number;
  cal_label: string | null;
  median_cal_bp: number | null;
  hpd68: string | null;
  hpd95: string | null;
  cal_error: string | null;
};

/** One page for the API: Explore's page of ids, then one query for every field of those rows. */
export function apiDeterminations(db: Db, query: ApiQuery): ApiPage {
  const { ids, total } = pageIds(db, query.filters, query.perPage);
  return { page: query.filters.page, per_page: query.perPage, total, determinations: apiRows(db, ids) };
}

export type ApiDeterminationDetail = ApiDetermination & {
  checks: { check: string; severity: string; message: string; details: Record<string, unknown> | null }[];
  reviews: { grade: number; flags: string[]; comment: string | null; created_at: string }[];
};

/** One determination as a list item, plus every check and every review (newest first); null when unknown. */
export function apiDetermination(db: Db, id: number): ApiDeterminationDetail | null {
  const [item] = apiRows(db, [id]);
  if (!item) return null;
  const checks = (
    db.$client
      .prepare('select "check", severity, message, details from check_results where determination_id = ? order by id')
      .all(id) as { check: string; severity: string; message: string; details: string | null }[]
  ).map((c) => ({ ...c, details: c.details ? (JSON.parse(c.details) as Record<string, unknown>) : null }));
  const reviews = (
    db.$client
      .prepare(
        "select grade, flags, comment, created_at from reviews where determination_id = ? order by created_at desc, id desc",
      )
      .all(id) as { grade: number; flags: string; comment: string | null; created_at: number }[]
  ).map((r) => ({
    grade: r.grade,
    flags: JSON.parse(r.flags) as string[],
    comment: r.comment,
    created_at: new Date(r.created_at).toISOString(),
  }));
  return { ...item, checks, reviews };
}

function apiRows(db: Db, ids: number[]): ApiDetermination[] {
  const rows =
    ids.length === 0
      ? []
      : (db.$client
          .prepare(
            `select d.id, d.lab_code, l.id as lab_id, l.name as lab_name,
               t.id as site_id, t.name as site_name, t.latitude, t.longitude, t.elevation_m,
               s.field_code as sample_code, s.material, s.depth_cm, s.strat_unit,
               d.method, d.constraint_kind, d.status, d.grade, d.version,
               d.c14_age_yr as c14_age, d.c14_error_yr as c14_error, d.f14c, d.f14c_error, d.d13c_permil as d13c,
               d.age_normalised, d.is_limit, d.pretreatment, d.curve_name as curve,
               d.delta_r_yr as delta_r, d.delta_r_error_yr as delta_r_error, d.delta_r_curve,
               d.signal, d.mineral, d.de_gy, d.de_error_gy, d.dose_rate_gy_per_ka, d.dose_rate_error_gy_per_ka,
               d.measurement_year, d.aliquots, d.age_model, p.id as pub_id, p.doi, p.authors as pub_authors,
               p.year as pub_year, p.title as pub_title, p.journal as pub_journal, p.citation as pub_citation,
               d.created_at, d.updated_at,
               c.curve_label as cal_label, c.median_cal_bp, c.hpd68, c.hpd95, c.error as cal_error
             from determinations d
             join samples s on s.id = d.sample_id
             join sites t on t.id = s.site_id
             join labs l on l.id = d.lab_id
             left join publications p on p.id = d.publication_id
             left join calibrations c on c.determination_id = d.id and c.is_current = 1
             where d.id in (${ids.map(() => "?").join(",")})`,
          )
          .all(...ids) as Joined[]);
  const byId = new Map(rows.map((r) => [r.id, r]));
  return ids
    .map((id) => byId.get(id))
    .filter((r): r is Joined => !!r)
    .map(toApi);
}

function toApi(r: Joined): ApiDetermination {
  const c14 = r.method === "radiocarbon";
  return {
    id: r.id,
    lab_code: r.lab_code,
    lab: { id: r.lab_id, name: r.lab_name },
    site: { id: r.site_id, name: r.site_name, latitude: r.latitude, longitude: r.longitude, elevation_m: r.elevation_m },
    sample_code: r.sample_code,
    material: r.material,
    depth_cm: r.depth_cm,
    strat_unit: r.strat_unit,
    method: r.method,
    constraint_kind: r.constraint_kind,
    status: r.status,
    grade: r.grade,
    version: r.version,
    c14_age: r.c14_age,
    c14_error: r.c14_error,
    f14c: r.f14c,
    f14c_error: r.f14c_error,
    d13c: r.d13c,
    age_normalised: c14 ? r.age_normalised === 1 : null,
    greater_than: c14 ? r.is_limit === 1 : null,
    pretreatment: r.pretreatment,
    curve: r.curve,
    delta_r: r.delta_r,
    delta_r_error: r.delta_r_error,
    delta_r_curve: r.delta_r_curve,
    signal: r.signal,
    mineral: r.mineral,
    de_gy: r.de_gy,
    de_error_gy: r.de_error_gy,
    dose_rate_gy_per_ka: r.dose_rate_gy_per_ka,
    dose_rate_error_gy_per_ka: r.dose_rate_error_gy_per_ka,
    measurement_year: r.measurement_year,
    aliquots: r.aliquots,
    age_model: r.age_model,
    doi: r.doi,
    publication:
      r.pub_id == null
        ? null
        : {
            doi: r.doi,
            authors: r.pub_authors,
            year: r.pub_year,
            title: r.pub_title,
            journal: r.pub_journal,
            citation: r.pub_citation!,
          },
    created_at: new Date(r.created_at).toISOString(),
    updated_at: new Date(r.updated_at).toISOString(),
    calibration:
      r.cal_label == null
        ? null
        : {
            curve: r.cal_label,
            median_cal_bp: r.median_cal_bp,
            hpd68: r.hpd68 ? (JSON.parse(r.hpd68) as HpdRange[]) : [],
            hpd95: r.hpd95 ? (JSON.parse(r.hpd95) as HpdRange[]) : [],
            error: r.cal_error,
          },
  };
}

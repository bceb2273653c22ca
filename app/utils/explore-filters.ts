// Explore's filter vocabulary and URL building, shared by the server query and the page. Client-safe.
import type { Status } from "#app/db/schema.ts";

export const EXPLORE_PAGE_SIZE = 50;

export const EXPLORE_SORTS = ["labCode", "site", "age", "cal", "grade", "created"] as const;
export type ExploreSort = (typeof EXPLORE_SORTS)[number];

/** Grade filter: a minimum grade ("2" = usable or better) or "ungraded" (no grade yet). */
export const GRADE_FILTERS = ["3", "2", "1", "0", "ungraded"] as const;

/** Status filter: absent = every status except withdrawn; "all" includes withdrawn too. */
export const STATUS_FILTERS = ["submitted", "in_review", "awaiting_answer", "graded", "withdrawn", "all"] as const;
// Kept literal so the browser bundle need not load the schema; this line fails to compile if they drift.
type MissingStatus = Exclude<Status, (typeof STATUS_FILTERS)[number]>;
/** @public a compile-time check that nothing reads */
export const STATUS_FILTERS_COMPLETE: [MissingStatus] extends [never] ? true : false = true;

/** Sort directions people expect when they first click a column. */
export function defaultDirection(sort: ExploreSort): "asc" | "desc" {
  return sort === "labCode" || sort === "site" ? "asc" : "desc";
}

/** The URL search string for filters (defaults left out), e.g. for page and sort links. */
export function exploreSearch(filters: object, changes: Record<string, unknown> = {}): string {
  const merged = { ...filters, ...changes } as Record<string, unknown>;
  const params = new URLSearchParams();
  for (const [k, v] of Object.entries(merged)) {
    if (v === undefined || v === null || v === "") continue;
    if (k === "page" && Number(v) === 1) continue;
    if (k === "sort" && v === "created") continue;
    params.set(k, String(v));
  }
  const s = params.toString();
  return s ? `?${s}` : "";
}

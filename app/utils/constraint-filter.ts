// The constraint-set filter: one vocabulary for the /constraints page, saved set definitions,
// releases and the constraints API. Parsed from URL search parameters (the API's names) and
// written back to them, so a URL holds the whole filter. Client-safe.
import { z } from "zod";
import { queryIssueMessages } from "#app/utils/query-issues.ts";

// Kept literal so the browser bundle need not load the schema (the server checks them against it).
export const FILTER_METHODS = ["radiocarbon", "luminescence", "exposure"] as const;
export const FILTER_KINDS = ["minimum", "maximum", "direct"] as const;
export const FILTER_FLAGS = [
  "young_carbon",
  "old_carbon",
  "reworked",
  "bulk_sediment",
  "reservoir_uncertain",
  "partial_bleaching",
  "near_saturation",
  "dose_rate_uncertain",
  "weak_stratigraphy",
  "location_uncertain",
] as const;
export const CHECK_ORDER = ["pass", "note", "warning", "conflict"] as const;
export type CheckSeverityName = (typeof CHECK_ORDER)[number];

/** How a time window selects: the 95.4 % range overlaps it (default), or the median lies in it. */
export const TIME_MODES = ["overlap", "median"] as const;

/** Every parameter the filter understands, in the order URLs are written. */
export const FILTER_PARAMS = [
  "bbox",
  "polygon",
  "from_cal_bp",
  "to_cal_bp",
  "time_mode",
  "methods",
  "materials",
  "kinds",
  "min_grade",
  "exclude_flags",
  "worst_check",
  "curve",
] as const;

/** What each filter parameter takes, in words, for 400 answers (after "give"). */
const FILTER_PARAMETER_HINTS: Readonly<Record<string, string>> = {
  from_cal_bp: "a number of years cal BP, from −100 to 100,000",
  to_cal_bp: "a number of years cal BP, from −100 to 100,000",
  time_mode: `one of ${TIME_MODES.join(", ")}`,
  methods: `a comma-separated list of ${FILTER_METHODS.join(", ")}`,
  kinds: `a comma-separated list of ${FILTER_KINDS.join(", ")}`,
  min_grade: "a whole grade 0, 1, 2 or 3",
  exclude_flags: `a comma-separated list of ${FILTER_FLAGS.join(", ")}`,
  worst_check: `one of ${CHECK_ORDER.join(", ")}`,
  curve: "a curve name of at most 50 characters",
  materials: "a comma-separated list of at most 50 material names",
};

/** A closed ring of [longitude, latitude] vertices (first vertex not repeated). */
export type Ring = [number, number][];

const blank = (v: unknown) => (typeof v === "string" && v.trim() === "" ? undefined : v);
const csvList = (v: unknown) =>
  typeof v === "string"
    ? v
        .split(",")
        .map((s) => s.trim())
        .filter(Boolean)
    : v;
const listOf = <T extends readonly [string, ...string[]]>(values: T) =>
  z.preprocess((v) => blank(csvList(blank(v))), z.array(z.enum(values)).min(1).optional());

const lon = z.number({ error: "give a number" }).min(-180, "longitude below −180").max(180, "longitude above 180");
const lat = z.number({ error: "give a number" }).min(-90, "latitude below −90").max(90, "latitude above 90");

const numbers = (s: string, sep: string) => s.split(sep).map((x) => (x.trim() === "" ? NaN : Number(x)));

const bboxSchema = z.preprocess(
  (v) => (typeof v === "string" ? numbers(v, ",") : v),
  z
    .tuple([lon, lat, lon, lat], { error: "give four numbers W,S,E,N in degrees" })
    .refine(([w, s, e, n]) => w < e && s < n, "west must be less than east and south less than north"),
);

/** Polygon in a URL: vertices "lon,lat" separated by semicolons, e.g. "-65,58;-62,58;-63,60". */
const polygonSchema = z.preprocess(
  (v) =>
    typeof v === "string"
      ? v
          .split(";")
          .filter((p) => p.trim() !== "")
          .map((p) => numbers(p, ","))
      : v,
  z
    .array(z.tuple([lon, lat], { error: "each vertex is lon,lat" }), { error: "vertices lon,lat separated by ;" })
    .min(3, "a polygon needs at least three vertices")
    .max(1000, "at most 1,000 vertices"),
);

const calBp = z.preprocess(blank, z.coerce.number({ error: "give a number of years cal BP" }).min(-100).max(100_000).optional());

export const constraintFilterSchema = z.object({
  bbox: z.preprocess(blank, bboxSchema.optional()),
  polygon: z.preprocess(blank, polygonSchema.optional()),
  from_cal_bp: calBp,
  to_cal_bp: calBp,
  time_mode: z.preprocess(blank, z.enum(TIME_MODES).default("overlap")),
  methods: listOf(FILTER_METHODS),
  materials: z.preprocess((v) => blank(csvList(blank(v))), z.array(z.string().max(100)).min(1).max(50).optional()),
  kinds: listOf(FILTER_KINDS),
  min_grade: z.preprocess(blank, z.coerce.number().int("a whole grade 0–3").min(0).max(3).optional()),
  exclude_flags: listOf(FILTER_FLAGS),
  worst_check: z.preprocess(blank, z.enum(CHECK_ORDER).optional()),
  curve: z.preprocess(blank, z.string().trim().max(50).optional()),
});

/** A region sent as GeoJSON (POST to the API, or a file uploaded on the page). */
export type RegionGeometry =
  { type: "Polygon"; coordinates: number[][][] } | { type: "MultiPolygon"; coordinates: number[][][][] };

export type ConstraintFilter = z.infer<typeof constraintFilterSchema> & { geometry?: RegionGeometry };

export type FilterParse = { ok: true; filter: ConstraintFilter } | { ok: false; errors: string[] };

/** Strict parse for the API and saved sets: every malformed or unknown parameter is named. */
export function parseConstraintFilter(params: URLSearchParams, ignore: readonly string[] = []): FilterParse {
  const raw: Record<string, string> = {};
  const errors: string[] = [];
  for (const [k, v] of params) {
    if (ignore.includes(k)) continue;
    if (!(FILTER_PARAMS as readonly string[]).includes(k)) errors.push(`${k}: not a filter parameter`);
    else if (k in raw) errors.push(`${k}: given more than once`);
    else raw[k] = v;
  }
  const parsed = constraintFilterSchema.safeParse(raw);
  if (!parsed.success) errors.push(...queryIssueMessages(parsed.error, raw, FILTER_PARAMETER_HINTS));
  if (errors.length > 0 || !parsed.success) return { ok: false, errors };
  return { ok: true, filter: parsed.data };
}

/** Lenient parse for the page: a malformed value in a hand-edited URL is dropped and reported. */
export function parseConstraintFilterLenient(params: URLSearchParams): { filter: ConstraintFilter; errors: string[] } {
  const strict = parseConstraintFilter(params);
  if (strict.ok) return { filter: strict.filter, errors: [] };
  const bad = new Set(strict.errors.map((e) => e.slice(0, e.indexOf(":"))));
  const kept = new URLSearchParams();
  for (const [k, v] of params) if (!bad.has(k) && !kept.has(k)) kept.set(k, v);
  const again = parseConstraintFilter(kept);
  return { filter: again.ok ? again.filter : constraintFilterSchema.parse({}), errors: strict.errors };
}

/** The filter as URL search parameters (defaults and empty values left out), in a fixed order. */
export function filterToParams(filter: Partial<ConstraintFilter>): URLSearchParams {
  const out = new URLSearchParams();
  const f = filter as Record<string, unknown>;
  for (const key of FILTER_PARAMS) {
    const v = f[key];
    if (v === undefined || v === null || v === "") continue;
    if (key === "time_mode" && v === "overlap") continue;
    if (key === "polygon") out.set(key, (v as Ring).map(([x, y]) => `${x},${y}`).join(";"));
    else if (Array.isArray(v)) {
      if (v.length > 0) out.set(key, v.join(","));
    } else out.set(key, String(v));
  }
  return out;
}

/** The filter as a plain object of the URL's parameters (what downloads and releases record). */
export function filterRecord(filter: Partial<ConstraintFilter>): Record<string, string> {
  return Object.fromEntries(filterToParams(filter));
}

/** Severities allowed when `worst` is the worst check allowed ("warning" allows pass, note and warning). */
export function severitiesWorseThan(worst: CheckSeverityName): CheckSeverityName[] {
  return CHECK_ORDER.slice(CHECK_ORDER.indexOf(worst) + 1);
}

/** The region a filter selects by shape, as GeoJSON: an uploaded geometry, or the URL's polygon. */
export function regionGeometry(f: ConstraintFilter): RegionGeometry | null {
  if (f.geometry) return f.geometry;
  if (f.polygon) return { type: "Polygon", coordinates: [[...f.polygon, f.polygon[0]!]] };
  return null;
}

const position = z.tuple([lon, lat]).rest(z.number());
const linearRing = z.array(position).min(4, "a ring needs at least four positions (closed)");
const polygonCoords = z.array(linearRing).min(1);

/**
 * A GeoJSON region: a Polygon or MultiPolygon, bare or as a Feature, or a FeatureCollection of
 * exactly one such Feature. Answers an error message naming what is wrong.
 */
export function parseRegionGeoJson(body: unknown): { ok: true; geometry: RegionGeometry } | { ok: false; error: string } {
  let g = body as { type?: unknown; geometry?: unknown; features?: unknown[]; coordinates?: unknown } | null;
  if (g && g.type === "FeatureCollection") {
    if (!Array.isArray(g.features) || g.features.length !== 1) {
      return { ok: false, error: "geometry: a FeatureCollection must hold exactly one polygon Feature" };
    }
    g = g.features[0] as typeof g;
  }
  if (g && g.type === "Feature") g = g.geometry as typeof g;
  if (!g || (g.type !== "Polygon" && g.type !== "MultiPolygon")) {
    return {
      ok: false,
      error: "geometry: send a GeoJSON Polygon or MultiPolygon (bare, as a Feature, or in a FeatureCollection)",
    };
  }
  const schema = g.type === "Polygon" ? polygonCoords : z.array(polygonCoords).min(1);
  const parsed = schema.safeParse(g.coordinates);
  if (!parsed.success) {
    const issue = parsed.error.issues[0]!;
    return { ok: false, error: `geometry.coordinates${issue.path.map((p) => `[${String(p)}]`).join("")}: ${issue.message}` };
  }
  return { ok: true, geometry: { type: g.type, coordinates: parsed.data } as RegionGeometry };
}

const LIST_PARAMS = new Set(["methods", "materials", "kinds", "exclude_flags"]);

/** A form's search parameters with repeated list names (checkbox groups) joined by commas and blanks dropped. */
export function normaliseFormParams(params: URLSearchParams): URLSearchParams {
  const out = new URLSearchParams();
  for (const [k, v] of params) {
    if (v.trim() === "") continue;
    if (LIST_PARAMS.has(k) && out.has(k)) out.set(k, `${out.get(k)},${v}`);
    else if (!out.has(k)) out.set(k, v);
  }
  return out;
}

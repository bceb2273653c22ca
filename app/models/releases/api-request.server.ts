// Reading a constraints or releases API request: the filter, the format and densities, every
// malformed parameter named in one 400.
import { DOWNLOAD_FORMATS, type DownloadFormat } from "#app/models/releases/downloads.server.ts";
import { parseConstraintFilter, parseRegionGeoJson, type ConstraintFilter } from "#app/utils/constraint-filter.ts";
import { json } from "#app/utils/http.server.ts";

export type OutputOptions = { format: DownloadFormat; densities: boolean };

/** format (json | csv | geojson | metadata, default json) and densities (true | false). */
export function parseOutput(params: URLSearchParams, errors: string[]): OutputOptions {
  const format = (params.get("format") ?? "json").trim() || "json";
  if (!(DOWNLOAD_FORMATS as readonly string[]).includes(format)) {
    errors.push(`format: one of ${DOWNLOAD_FORMATS.join(", ")} (got "${format.slice(0, 20)}")`);
  }
  const rawDensities = (params.get("densities") ?? "false").trim().toLowerCase();
  if (!["true", "false", "1", "0", ""].includes(rawDensities))
    errors.push(`densities: true or false (got "${rawDensities.slice(0, 20)}")`);
  const densities = rawDensities === "true" || rawDensities === "1";
  if (densities && format !== "json") errors.push("densities: only the json format carries densities");
  return { format: format as DownloadFormat, densities };
}

export function badParameters(errors: string[]): Response {
  return json({ error: "Malformed parameters.", errors }, { status: 400, headers: { "Cache-Control": "no-store" } });
}

export const MAX_REGION_BYTES = 2 * 1024 * 1024;

/** The region of a POST body (GeoJSON), added to the filter; errors name `geometry`. */
export async function regionFromBody(request: Request, filter: ConstraintFilter, errors: string[]): Promise<void> {
  if (Number(request.headers.get("Content-Length") ?? 0) > MAX_REGION_BYTES) {
    errors.push("geometry: the GeoJSON body is larger than 2 MB");
    return;
  }
  const text = await request.text();
  if (text.length > MAX_REGION_BYTES) {
    errors.push("geometry: the GeoJSON body is larger than 2 MB");
    return;
  }
  let body: unknown;
  try {
    body = JSON.parse(text);
  } catch {
    errors.push("geometry: the body is not valid JSON");
    return;
  }
  const region = parseRegionGeoJson(body);
  if (!region.ok) errors.push(region.error);
  else filter.geometry = region.geometry;
}

/** The filter from a URL's parameters (format and densities are read separately). */
export function filterFromParams(params: URLSearchParams, errors: string[]): ConstraintFilter | null {
  const parsed = parseConstraintFilter(params, ["format", "densities"]);
  if (!parsed.ok) {
    errors.push(...parsed.errors);
    return null;
  }
  return parsed.filter;
}

/**
 * A filter given as a JSON object with the API's parameter names ({"bbox": "W,S,E,N" or
 * [W,S,E,N], "min_grade": 2, "methods": ["radiocarbon"], …, optionally "geometry": GeoJSON}).
 */
export function filterFromObject(value: unknown, errors: string[]): ConstraintFilter | null {
  if (value == null) value = {};
  if (typeof value !== "object" || Array.isArray(value)) {
    errors.push("filter: give an object of filter parameters");
    return null;
  }
  const params = new URLSearchParams();
  let geometry: unknown;
  for (const [k, v] of Object.entries(value as Record<string, unknown>)) {
    if (k === "geometry") geometry = v;
    else if (v == null) continue;
    else if (Array.isArray(v)) params.set(k, v.join(","));
    else if (typeof v === "object") errors.push(`filter.${k}: give a string, a number or a list`);
    else params.set(k, String(v));
  }
  const parsed = parseConstraintFilter(params);
  if (!parsed.ok) {
    errors.push(...parsed.errors.map((e) => `filter.${e}`));
    return null;
  }
  if (geometry !== undefined) {
    const region = parseRegionGeoJson(geometry);
    if (!region.ok) errors.push(`filter.${region.error}`);
    else parsed.filter.geometry = region.geometry;
  }
  return parsed.filter;
}

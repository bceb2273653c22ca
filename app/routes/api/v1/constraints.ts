import type { Route } from "./+types/constraints";
import { requireApiUser } from "#app/auth/api.server.ts";
import { getDb } from "#app/db/client.server.ts";
import { badParameters, filterFromParams, parseOutput, regionFromBody } from "#app/models/releases/api-request.server.ts";
import { selectConstraints, selectionResponse } from "#app/models/releases/selection-download.server.ts";
import { knownCurveError } from "#app/models/releases/selection.server.ts";
import { json } from "#app/utils/http.server.ts";
import { cachedDownload } from "#app/models/registry/download-cache.server.ts";

/*
 * GET /api/v1/constraints — the constraint set a filter selects, for any valid personal token.
 * Query: bbox=W,S,E,N, polygon, from_cal_bp, to_cal_bp, time_mode, methods, materials, kinds,
 * min_grade, exclude_flags, worst_check, curve, format=json|csv|geojson|metadata, densities=true.
 * POST to the same path with a GeoJSON Polygon/MultiPolygon body selects by that region (the other
 * parameters stay in the URL). A malformed parameter → 400 naming it; no token → 401.
 */
async function answer(request: Request, withBody: boolean): Promise<Response> {
  const url = new URL(request.url);
  const errors: string[] = [];
  const output = parseOutput(url.searchParams, errors);
  const filter = filterFromParams(url.searchParams, errors);
  if (filter && withBody) await regionFromBody(request, filter, errors);
  const db = getDb();
  if (filter?.curve) {
    const curveError = knownCurveError(db, filter.curve);
    if (curveError) errors.push(curveError);
  }
  if (errors.length > 0 || !filter) return badParameters(errors);
  const metadataUrl = new URL(url);
  metadataUrl.searchParams.set("format", "metadata");
  metadataUrl.searchParams.delete("densities");
  const produce = () =>
    selectionResponse(db, selectConstraints(db, filter), output.format, {
      densities: output.densities,
      metadataUrl: metadataUrl.toString(),
    });
  // A GET's answer is kept per query and data version (a region in a POST body is not part of the key).
  if (withBody) return produce();
  return cachedDownload(db, request, `api-constraints ${output.format} ${output.densities} ${metadataUrl}`, produce);
}

export async function loader({ request }: Route.LoaderArgs) {
  await requireApiUser(request);
  return answer(request, false);
}

export async function action({ request }: Route.ActionArgs) {
  await requireApiUser(request);
  if (request.method !== "POST")
    return json({ error: "Use GET, or POST with a GeoJSON region." }, { status: 405, headers: { Allow: "GET, POST" } });
  return answer(request, true);
}

import type { Route } from "./+types/site-search";
import { requireRole } from "#app/auth/session.server.ts";
import { getDb } from "#app/db/client.server.ts";
import { boxFromText, searchSites, sitesInBox, SITE_SEARCH_LIMIT } from "#app/models/registry/site-search.server.ts";
import { json } from "#app/utils/http.server.ts";

/*
 * GET /api/site-search?q=…[&limit=…] — sites already in the registry whose name starts with the
 * text (or has a word starting with it), or, when q is "latitude, longitude", the nearest sites.
 * For the submission form's site combobox; at most 50 answers.
 * GET /api/site-search?bbox=south,west,north,east — the sites in a map's view for the form's site
 * picker, at most 500, with `more` when others lie there too.
 */
export async function loader({ request }: Route.LoaderArgs) {
  await requireRole(request, "contributor");
  const url = new URL(request.url);
  const bbox = url.searchParams.get("bbox");
  if (bbox !== null) {
    const box = boxFromText(bbox.slice(0, 200));
    if (!box) return json({ error: "bbox: give south,west,north,east in decimal degrees (south ≤ north)." }, { status: 400 });
    return json(sitesInBox(getDb(), box), { headers: { "Cache-Control": "no-store" } });
  }
  const q = (url.searchParams.get("q") ?? "").slice(0, 200);
  const limitRaw = Number(url.searchParams.get("limit") ?? SITE_SEARCH_LIMIT);
  const limit = Number.isInteger(limitRaw) && limitRaw > 0 ? Math.min(limitRaw, 50) : SITE_SEARCH_LIMIT;
  return json({ q, sites: searchSites(getDb(), { q, limit }) }, { headers: { "Cache-Control": "no-store" } });
}

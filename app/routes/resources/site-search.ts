import type { Route } from "./+types/site-search";
import { requireRole } from "#app/auth/session.server.ts";
import { getDb } from "#app/db/client.server.ts";
import { searchSites, SITE_SEARCH_LIMIT } from "#app/models/registry/site-search.server.ts";
import { json } from "#app/utils/http.server.ts";

/*
 * GET /api/site-search?q=…[&limit=…] — sites already in the registry whose name starts with the
 * text (or has a word starting with it), or, when q is "latitude, longitude", the nearest sites.
 * For the submission form's site combobox; at most 50 answers.
 */
export async function loader({ request }: Route.LoaderArgs) {
  await requireRole(request, "contributor");
  const url = new URL(request.url);
  const q = (url.searchParams.get("q") ?? "").slice(0, 200);
  const limitRaw = Number(url.searchParams.get("limit") ?? SITE_SEARCH_LIMIT);
  const limit = Number.isInteger(limitRaw) && limitRaw > 0 ? Math.min(limitRaw, 50) : SITE_SEARCH_LIMIT;
  return json({ q, sites: searchSites(getDb(), { q, limit }) }, { headers: { "Cache-Control": "no-store" } });
}

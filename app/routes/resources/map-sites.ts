import type { Route } from "./+types/map-sites";
import { getOptionalUser } from "#app/auth/session.server.ts";
import { getDb } from "#app/db/client.server.ts";
import { mapSites } from "#app/models/registry/map.server.ts";
import { cachedJson } from "#app/models/registry/read-cache.server.ts";
import { json } from "#app/utils/http.server.ts";

/** GET /api/map-sites: one compact row per site for the map; signed-in people only. */
export async function loader({ request }: Route.LoaderArgs) {
  const user = await getOptionalUser(request);
  if (!user) return json({ error: "Sign in to see the map data." }, { status: 401 });
  // Computed once per change of the registry; the browser revalidates with its ETag (304).
  const db = getDb();
  return cachedJson(db, request, "map-sites", () => ({ sites: mapSites(db) }), { "Cache-Control": "private, no-cache" });
}

import type { Route } from "./+types/map-sites";
import { getOptionalUser } from "#app/auth/session.server.ts";
import { getDb } from "#app/db/client.server.ts";
import { mapSites } from "#app/models/registry/map.server.ts";
import { json } from "#app/utils/http.server.ts";

/** GET /api/map-sites: one compact row per site for the map; signed-in people only. */
export async function loader({ request }: Route.LoaderArgs) {
  const user = await getOptionalUser(request);
  if (!user) return json({ error: "Sign in to see the map data." }, { status: 401 });
  return json({ sites: mapSites(getDb()) }, { headers: { "Cache-Control": "private, no-store" } });
}

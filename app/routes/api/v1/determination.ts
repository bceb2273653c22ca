import type { Route } from "./+types/determination";
import { requireApiUser } from "#app/auth/api.server.ts";
import { getDb } from "#app/db/client.server.ts";
import { apiDetermination } from "#app/models/registry/determinations-api.server.ts";
import { json } from "#app/utils/http.server.ts";

/*
 * GET /api/v1/determinations/{id} — any valid personal token. 200: one item of the list's shape plus
 * checks [{"check","severity","message","details"}] and reviews [{"grade","flags","comment","created_at"}]
 * (newest first); 404 {"error"} for an unknown id; 401 without a token.
 */
export async function loader({ request, params }: Route.LoaderArgs) {
  await requireApiUser(request);
  const id = Number(params.id);
  const item = Number.isInteger(id) && id > 0 ? apiDetermination(getDb(), id) : null;
  if (!item) return json({ error: `There is no determination ${params.id}.` }, { status: 404 });
  return json(item, { headers: { "Cache-Control": "no-store" } });
}

import type { Route } from "./+types/model-run-margins";
import { requireRole } from "#app/auth/session.server.ts";
import { getDb } from "#app/db/client.server.ts";
import { getRun, runMargins } from "#app/models/model-runs/views.server.ts";
import { json, notFound } from "#app/utils/http.server.ts";

/**
 * /runs/:id/margins.json — the run's ice margin at up to 60 slices (oldest first), outlined when it
 * was scored, for the run page's map. Fetched by the map only, so the page itself stays small.
 */
export async function loader({ request, params }: Route.LoaderArgs) {
  await requireRole(request, "modeller");
  const db = getDb();
  const run = getRun(db, Number(params.id));
  if (!run) notFound("No such model run.");
  return json({ slices: runMargins(db, run.id) }, { headers: { "Cache-Control": "private, max-age=300" } });
}

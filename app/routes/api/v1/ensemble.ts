import type { Route } from "./+types/ensemble";
import { requireApiRole } from "#app/auth/api.server.ts";
import { getDb } from "#app/db/client.server.ts";
import { apiEnsemble, ensembleRuns } from "#app/models/model-runs/views.server.ts";
import { json } from "#app/utils/http.server.ts";

/* GET /api/v1/ensembles/{name} → {"name","runs":[{rank,id,name,status,parameters,log_likelihood,…}]}, ranked by log L. */
export async function loader({ request, params }: Route.LoaderArgs) {
  await requireApiRole(request, "modeller");
  const runs = ensembleRuns(getDb(), params.name);
  if (!runs.length) return json({ error: "No such ensemble." }, { status: 404 });
  return json(apiEnsemble(runs, params.name));
}

import type { Route } from "./+types/model-run";
import { requireApiRole } from "#app/auth/api.server.ts";
import { getDb } from "#app/db/client.server.ts";
import { apiRun, getRun } from "#app/models/model-runs/views.server.ts";
import { json } from "#app/utils/http.server.ts";

/*
 * GET /api/v1/model-runs/{id} → {"id","name","status","error","log_likelihood","n_constraints",
 * "max_implausibility","scores":[{"determination_id","score","implausibility","model_deglaciation_cal_bp"}]}.
 * `score` is the raw score in [0, 1], before ε and the grade weight.
 */
export async function loader({ request, params }: Route.LoaderArgs) {
  await requireApiRole(request, "modeller");
  const id = Number(params.id);
  const run = Number.isInteger(id) ? getRun(getDb(), id) : undefined;
  if (!run) return json({ error: "No such model run." }, { status: 404 });
  return json(apiRun(getDb(), run));
}

import type { Route } from "./+types/model-runs";
import { requireApiRole } from "#app/auth/api.server.ts";
import { getDb } from "#app/db/client.server.ts";
import { UnknownReleaseError } from "#app/models/model-runs/constraints.server.ts";
import { IntakeError, intakeRuns, withReceivedRuns } from "#app/models/model-runs/intake.server.ts";
import { startScoring } from "#app/models/model-runs/runs.server.ts";
import { json } from "#app/utils/http.server.ts";

/*
 * POST /api/v1/model-runs — a contract outside checks rely on; keep the names.
 * multipart: `file`, `name`, optional `ensemble`, `release` (slug; default every determination
 * graded 2 or 3), `parameters` (a JSON object), `time_offset` (cal BP of model time 0)
 * → 202 {"id", "status": "queued"}; 400 {"error"} for a bad file, 413 past MODEL_RUN_MAX_BYTES
 * (the body is streamed to a temporary file and reading stops at the limit; nothing is kept).
 */

export async function loader({ request }: Route.LoaderArgs) {
  await requireApiRole(request, "modeller");
  return json({ error: 'Use POST with a multipart field named "file".' }, { status: 405, headers: { Allow: "POST" } });
}

function optionalNumber(form: URLSearchParams, key: string): number | null {
  const v = form.get(key);
  if (v === null || v.trim() === "") return null;
  const n = Number(v);
  if (!Number.isFinite(n)) throw new IntakeError(`${key} must be a number.`);
  return n;
}

export async function action({ request }: Route.ActionArgs) {
  const user = await requireApiRole(request, "modeller");
  if (request.method !== "POST") return json({ error: "Use POST." }, { status: 405, headers: { Allow: "POST" } });
  const db = getDb();
  try {
    const run = await withReceivedRuns(request, { maxFiles: 1 }, async ({ runs: [file], fields: form }) => {
      if (!file) throw new IntakeError('Send the run file in a field named "file".');
      const name = (form.get("name") ?? "").trim();
      if (!name) throw new IntakeError('Give the run a name (field "name").');
      let parameters: Record<string, number | string> | null = null;
      const rawParams = form.get("parameters");
      if (rawParams?.trim()) {
        try {
          parameters = JSON.parse(rawParams);
        } catch {
          throw new IntakeError("parameters must be a JSON object.");
        }
        if (!parameters || typeof parameters !== "object" || Array.isArray(parameters))
          throw new IntakeError("parameters must be a JSON object.");
      }
      const [created] = await intakeRuns(db, [file], {
        userId: user.id,
        name: name.slice(0, 200),
        ensemble: (form.get("ensemble") ?? "").trim().slice(0, 200) || null,
        parameters,
        timeOffset: optionalNumber(form, "time_offset"),
        thresholdM: optionalNumber(form, "threshold"),
        tolerance: optionalNumber(form, "tolerance"),
        choice: { releaseSlug: (form.get("release") ?? "").trim() || null },
      });
      return created!;
    });
    startScoring(db, [run.id], user.id);
    return json({ id: run.id, status: "queued" }, { status: 202, headers: { Location: `/api/v1/model-runs/${run.id}` } });
  } catch (e) {
    if (e instanceof IntakeError) return json({ error: e.message, problems: e.problems }, { status: e.status });
    if (e instanceof UnknownReleaseError) return json({ error: e.message }, { status: 400 });
    throw e;
  }
}

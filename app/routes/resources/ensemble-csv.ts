import type { Route } from "./+types/ensemble-csv";
import { requireRole } from "#app/auth/session.server.ts";
import { getDb } from "#app/db/client.server.ts";
import { ensembleCsv, ensembleRuns, ensembleScoresCsv } from "#app/models/model-runs/views.server.ts";
import { notFound } from "#app/utils/http.server.ts";

/** /runs/ensembles/:name/runs.csv (emulator training) and …/scores.csv (per constraint); spreadsheet-safe. */
export async function loader({ request, params }: Route.LoaderArgs) {
  await requireRole(request, "modeller");
  const db = getDb();
  const runs = ensembleRuns(db, params.name);
  if (!runs.length) notFound("No ensemble of that name.");
  const scores = new URL(request.url).pathname.endsWith("/scores.csv");
  const body = scores ? ensembleScoresCsv(db, runs) : ensembleCsv(runs);
  const file = `${params.name.replace(/[^\w.-]+/g, "_")}-${scores ? "scores" : "runs"}.csv`;
  return new Response(body, {
    headers: { "Content-Type": "text/csv; charset=utf-8", "Content-Disposition": `attachment; filename="${file}"` },
  });
}

import { createReadStream, existsSync, statSync } from "node:fs";
import { Readable } from "node:stream";
import type { Route } from "./+types/model-run-file";
import { requireRole } from "#app/auth/session.server.ts";
import { getDb } from "#app/db/client.server.ts";
import { storedFile } from "#app/models/model-runs/runs.server.ts";
import { getRun } from "#app/models/model-runs/views.server.ts";
import { notFound } from "#app/utils/http.server.ts";

/** /runs/:id/file — the run file as uploaded (the demo's NetCDF files can be downloaded and re-uploaded). */
export async function loader({ request, params }: Route.LoaderArgs) {
  await requireRole(request, "modeller");
  const run = getRun(getDb(), Number(params.id));
  const path = run ? storedFile(run) : null;
  if (!run || !path || !existsSync(path)) notFound("No file for this run.");
  const name = (run.fileName ?? "run").replace(/[^\w.-]+/g, "_");
  return new Response(Readable.toWeb(createReadStream(path)) as ReadableStream, {
    headers: {
      "Content-Type": run.format === "geojson" ? "application/geo+json" : "application/x-netcdf",
      "Content-Length": String(statSync(path).size),
      "Content-Disposition": `attachment; filename="${name}"`,
    },
  });
}

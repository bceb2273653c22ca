import type { Route } from "./+types/upload-errors-csv";
import { requireRole } from "#app/auth/session.server.ts";
import { getDb } from "#app/db/client.server.ts";
import { getBatchForUser } from "#app/models/submission/uploads/batches.server.ts";
import { toCsv } from "#app/utils/csv.ts";
import { notFound } from "#app/utils/http.server.ts";

/** Every error of an upload as CSV (spreadsheet-safe cells), for fixing the file offline. */
export async function loader({ request, params }: Route.LoaderArgs) {
  const user = await requireRole(request, "contributor");
  const batch = getBatchForUser(getDb(), params.publicId, user.id);
  if (!batch) notFound("No upload with this id.");
  const body = toCsv(
    ["row", "column", "message"],
    (batch.errors ?? []).map((e) => [e.row, e.column, e.message]),
  );
  const base =
    batch.fileName
      .replace(/\.[^.]+$/, "")
      .replace(/[^\w.-]+/g, "_")
      .slice(0, 60) || "upload";
  return new Response(body, {
    headers: {
      "Content-Type": "text/csv; charset=utf-8",
      "Content-Disposition": `attachment; filename="${base}-errors.csv"`,
      "Cache-Control": "no-store",
    },
  });
}

import type { Route } from "./+types/uploads";
import { requireApiRole } from "#app/auth/api.server.ts";
import { getDb } from "#app/db/client.server.ts";
import { withUploadedSheet } from "#app/models/submission/upload-http.server.ts";
import { createUploadOffThread } from "#app/models/submission/uploads/off-thread.server.ts";
import { UploadError } from "#app/models/submission/uploads/read-sheet.server.ts";
import { json } from "#app/utils/http.server.ts";

/*
 * POST /api/v1/uploads — a contract outside scripts rely on; keep the shapes exactly.
 * multipart field `file` (CSV or XLSX, headers = the template's column names) →
 * 200 {"upload_id","rows","valid","errors":[{"row","column","message"}],"warnings":[same]}; rows are numbered as a
 * spreadsheet shows them (header = row 1). Nothing is written to the registry until commit.
 */

export async function loader({ request }: Route.LoaderArgs) {
  await requireApiRole(request, "contributor");
  return json({ error: 'Use POST with a multipart field named "file".' }, { status: 405, headers: { Allow: "POST" } });
}

export async function action({ request }: Route.ActionArgs) {
  const user = await requireApiRole(request, "contributor");
  if (request.method !== "POST") return json({ error: "Use POST." }, { status: 405, headers: { Allow: "POST" } });
  try {
    const upload = await withUploadedSheet(request, (file) =>
      createUploadOffThread(getDb(), { userId: user.id, fileName: file.name, path: file.path }),
    );
    return json({
      upload_id: upload.publicId,
      rows: upload.rows,
      valid: upload.validCount,
      errors: upload.errors.map((e) => ({ row: e.row, column: e.column, message: e.message })),
      warnings: upload.warnings.map((w) => ({ row: w.row, column: w.column, message: w.message })),
    });
  } catch (e) {
    if (e instanceof UploadError) return json({ error: e.message }, { status: e.status });
    throw e;
  }
}

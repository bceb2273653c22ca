import type { Route } from "./+types/upload-file";
import { requireRole } from "#app/auth/session.server.ts";
import { getDb } from "#app/db/client.server.ts";
import { withUploadedSheet } from "#app/models/submission/upload-http.server.ts";
import { createUploadOffThread } from "#app/models/submission/uploads/off-thread.server.ts";
import { UploadError } from "#app/models/submission/uploads/read-sheet.server.ts";
import { redirectWithFlash } from "#app/utils/flash.server.ts";
import { json } from "#app/utils/http.server.ts";

/*
 * POST /uploads/file — receives the upload page's file. The page sends it with XMLHttpRequest to
 * show progress and asks for JSON ({location} or {error}); without JavaScript the form posts here
 * and gets a redirect either way.
 */
export async function action({ request }: Route.ActionArgs) {
  const user = await requireRole(request, "contributor");
  const wantsJson = (request.headers.get("Accept") ?? "").includes("application/json");
  try {
    const upload = await withUploadedSheet(request, (file) =>
      createUploadOffThread(getDb(), { userId: user.id, fileName: file.name, path: file.path }),
    );
    const location = `/uploads/${upload.publicId}`;
    const message =
      upload.errors.length === 0
        ? `Read ${upload.rows} rows; all are valid. Check the preview and commit.`
        : `Read ${upload.rows} rows; ${upload.rows - upload.validCount} have errors.`;
    if (wantsJson) return json({ location });
    return redirectWithFlash(location, { kind: "info", message });
  } catch (e) {
    if (!(e instanceof UploadError)) throw e;
    if (wantsJson) return json({ error: e.message }, { status: e.status });
    return redirectWithFlash("/uploads", { kind: "error", message: e.message });
  }
}

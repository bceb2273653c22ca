import type { Route } from "./+types/uploads.commit";
import { requireApiRole } from "#app/auth/api.server.ts";
import { clientAddress } from "#app/auth/session.server.ts";
import { getDb } from "#app/db/client.server.ts";
import { CommitRefused } from "#app/models/submission/uploads/commit.server.ts";
import { commitUploadOffThread } from "#app/models/submission/uploads/off-thread.server.ts";
import { getBatchForUser } from "#app/models/submission/uploads/batches.server.ts";
import { json } from "#app/utils/http.server.ts";

/*
 * POST /api/v1/uploads/{upload_id}/commit with {"mode":"all"} or {"mode":"valid_only"} —
 * a contract outside scripts rely on. 200 {"committed":N,"determination_ids":[…]};
 * mode "all" with any error → 409 and nothing written; someone else's upload → 404.
 */

export async function loader({ request }: Route.LoaderArgs) {
  await requireApiRole(request, "contributor");
  return json({ error: "Use POST." }, { status: 405, headers: { Allow: "POST" } });
}

export async function action({ request, params }: Route.ActionArgs) {
  const user = await requireApiRole(request, "contributor");
  if (request.method !== "POST") return json({ error: "Use POST." }, { status: 405, headers: { Allow: "POST" } });
  const db = getDb();
  const batch = getBatchForUser(db, params.uploadId, user.id);
  if (!batch) return json({ error: "No upload with this id." }, { status: 404 });
  let body: unknown;
  try {
    body = await request.json();
  } catch {
    return json({ error: 'Send a JSON body: {"mode":"all"} or {"mode":"valid_only"}.' }, { status: 400 });
  }
  const mode = (body as { mode?: unknown } | null)?.mode;
  if (mode !== "all" && mode !== "valid_only") {
    return json({ error: 'mode must be "all" or "valid_only".' }, { status: 400 });
  }
  try {
    const result = await commitUploadOffThread(db, batch, mode, { userId: user.id }, { ip: clientAddress(request) });
    return json({ committed: result.committed, determination_ids: result.determinationIds });
  } catch (e) {
    if (e instanceof CommitRefused) return json({ error: e.message }, { status: e.status });
    throw e;
  }
}

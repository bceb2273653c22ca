import type { Route } from "./+types/determination-preview";
import { requireRole } from "#app/auth/session.server.ts";
import { getDb } from "#app/db/client.server.ts";
import { previewCalendarAge } from "#app/models/submission/form/preview.server.ts";
import { referenceOptions } from "#app/models/submission/form/schema.server.ts";
import { json } from "#app/utils/http.server.ts";

/*
 * POST /api/determination-preview — the calendar age the submission form would give, computed
 * exactly as the registry stores it (δ13C normalisation, F14C, limits, ΔR, luminescence dose
 * rates). Writes nothing; POST only because the form posts its fields as they stand.
 */

export async function loader({ request }: Route.LoaderArgs) {
  await requireRole(request, "contributor");
  return json({ error: "Use POST with the form's fields." }, { status: 405, headers: { Allow: "POST" } });
}

export async function action({ request }: Route.ActionArgs) {
  await requireRole(request, "contributor");
  if (request.method !== "POST") return json({ error: "Use POST." }, { status: 405, headers: { Allow: "POST" } });
  const form = await request.formData();
  const raw: Record<string, unknown> = {};
  for (const [k, v] of form) if (typeof v === "string" && !(k in raw)) raw[k] = v;
  const db = getDb();
  return json(previewCalendarAge(db, raw, referenceOptions(db)), { headers: { "Cache-Control": "no-store" } });
}

import type { Route } from "./+types/jobs";
import { getOptionalUser } from "#app/auth/session.server.ts";
import { getDb } from "#app/db/client.server.ts";
import { getJob } from "#app/models/jobs.server.ts";
import { json } from "#app/utils/http.server.ts";

/** GET /api/jobs/:id — a background job's progress, polled by the page that started it. Editors only. */
export async function loader({ request, params }: Route.LoaderArgs) {
  const user = await getOptionalUser(request);
  if (!user) return json({ error: "Sign in first." }, { status: 401 });
  if (!user.roles.includes("editor")) return json({ error: "Only editors may follow jobs." }, { status: 403 });
  const id = Number(params.id);
  const job = Number.isInteger(id) && id > 0 ? getJob(getDb(), id) : null;
  if (!job) return json({ error: "No such job." }, { status: 404 });
  return json(job, { headers: { "Cache-Control": "no-store" } });
}

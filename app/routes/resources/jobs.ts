import type { Route } from "./+types/jobs";
import { getOptionalUser } from "#app/auth/session.server.ts";
import type { Role } from "#app/db/schema.ts";
import { getDb } from "#app/db/client.server.ts";
import { getJob, jobByTicket, type JobView } from "#app/models/jobs.server.ts";
import { json } from "#app/utils/http.server.ts";

/**
 * Who may follow a job: editors every job (they run recalibrations and check runs), reviewers the
 * check runs (the queue shows one under way, since it changes the checks they read), and anyone
 * the job they started.
 */
function mayFollow(job: JobView, user: { id: number; roles: Role[] }): boolean {
  if (user.roles.includes("editor")) return true;
  if (job.kind === "checks" && user.roles.includes("reviewer")) return true;
  return job.createdBy === user.id;
}

/**
 * GET /api/jobs/:id — a background job's progress, polled by the page that shows it.
 * GET /api/jobs/ticket?kind=…&ticket=… — the newest job of that kind the person started with this
 * ticket (a value their page chose before it sent the request that started the job).
 */
export async function loader({ request, params }: Route.LoaderArgs) {
  const user = await getOptionalUser(request);
  if (!user) return json({ error: "Sign in first." }, { status: 401 });
  const url = new URL(request.url);
  const id = Number(params.id);
  const job =
    params.id === "ticket"
      ? jobByTicket(getDb(), url.searchParams.get("kind") ?? "", user.id, url.searchParams.get("ticket") ?? "")
      : Number.isInteger(id) && id > 0
        ? getJob(getDb(), id)
        : null;
  if (!job) return json({ error: "No such job." }, { status: 404 });
  if (!mayFollow(job, user)) return json({ error: "This job is not yours to follow." }, { status: 403 });
  return json(job, { headers: { "Cache-Control": "no-store" } });
}

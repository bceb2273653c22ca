import type { Route } from "./+types/reviews";
import { requireApiRole } from "#app/auth/api.server.ts";
import { clientAddress } from "#app/auth/session.server.ts";
import { getDb } from "#app/db/client.server.ts";
import { recordReviews, ReviewRefused } from "#app/models/review/reviews.server.ts";
import { gradeSchema } from "#app/utils/review-forms.ts";
import { json } from "#app/utils/http.server.ts";

/*
 * POST /api/v1/reviews — reviewer token. Body {"determination_id", "grade", "flags", "comment"}.
 * 201 {"id"}; 400 {"errors":[{"field","message"}]} naming the field (unknown grade or flag, bad body);
 * 403 when the reviewer submitted the determination; 404 for an unknown determination;
 * 409 when it is withdrawn or taken by another reviewer.
 */
export async function action({ request }: Route.ActionArgs) {
  const user = await requireApiRole(request, "reviewer");
  if (request.method !== "POST") return json({ error: "Use POST." }, { status: 405, headers: { Allow: "POST" } });
  let body: unknown;
  try {
    body = await request.json();
  } catch {
    return json({ errors: [{ field: "", message: "The body is not valid JSON." }] }, { status: 400 });
  }
  if (typeof body !== "object" || body === null || Array.isArray(body)) {
    return json(
      { errors: [{ field: "", message: 'Send one JSON object: {"determination_id", "grade", "flags", "comment"}.' }] },
      { status: 400 },
    );
  }
  const raw = body as Record<string, unknown>;
  const errors: { field: string; message: string }[] = [];
  const id = raw.determination_id;
  if (typeof id !== "number" || !Number.isInteger(id) || id <= 0) {
    errors.push({ field: "determination_id", message: "determination_id must be a positive whole number." });
  }
  if (typeof raw.grade !== "number") errors.push({ field: "grade", message: "grade must be 0, 1, 2 or 3 (a number)." });
  if (raw.flags !== undefined && !Array.isArray(raw.flags))
    errors.push({ field: "flags", message: "flags must be a list of flag names." });
  if (raw.comment !== undefined && raw.comment !== null && typeof raw.comment !== "string") {
    errors.push({ field: "comment", message: "comment must be text." });
  }
  const parsed = gradeSchema.safeParse({ grade: raw.grade, flags: raw.flags ?? [], comment: raw.comment ?? undefined });
  if (!parsed.success) {
    for (const issue of parsed.error.issues) {
      const field = String(issue.path[0] ?? "");
      if (!errors.some((e) => e.field === field)) errors.push({ field, message: `${field}: ${issue.message}` });
    }
  }
  if (errors.length || !parsed.success) return json({ errors }, { status: 400 });
  try {
    const [reviewId] = recordReviews(getDb(), [id as number], parsed.data, { userId: user.id, ip: clientAddress(request) });
    return json({ id: reviewId }, { status: 201 });
  } catch (e) {
    if (e instanceof ReviewRefused) return json({ error: e.message, field: e.field ?? null }, { status: e.status });
    throw e;
  }
}

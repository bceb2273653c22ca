import type { Route } from "./+types/releases";
import { requireApiRole } from "#app/auth/api.server.ts";
import { getDb } from "#app/db/client.server.ts";
import { badParameters, filterFromObject } from "#app/models/releases/api-request.server.ts";
import { knownCurveError } from "#app/models/releases/selection.server.ts";
import {
  listReleases,
  nextVersion,
  publishRelease,
  PublishRefused,
  releaseSummary,
} from "#app/models/releases/releases.server.ts";
import { json } from "#app/utils/http.server.ts";

/*
 * GET /api/v1/releases — public: every published release, newest first.
 * POST /api/v1/releases — editor token: {"name", "description", "filter", "version"?} publishes a
 * release from the filter (the constraints API's parameter names) → 201 {"slug","checksum","count"}.
 * Same rules as publishing from the page (publishRelease): not empty, name + version unique.
 */
export async function loader({ request }: Route.LoaderArgs) {
  // Public, like the release pages: open data needs no check beyond the rate limits in server.js.
  const origin = new URL(request.url).origin;
  const releases = listReleases(getDb()).map((r) => releaseSummary(r, `${origin}/releases/${r.slug}`));
  return json({ count: releases.length, releases }, { headers: { "Cache-Control": "public, max-age=60" } });
}

export async function action({ request }: Route.ActionArgs) {
  const user = await requireApiRole(request, "editor");
  if (request.method !== "POST") return json({ error: "Use POST." }, { status: 405, headers: { Allow: "GET, POST" } });
  let body: Record<string, unknown>;
  try {
    const parsed: unknown = JSON.parse(await request.text());
    if (!parsed || typeof parsed !== "object" || Array.isArray(parsed)) throw new Error();
    body = parsed as Record<string, unknown>;
  } catch {
    return badParameters(['body: send a JSON object {"name", "description", "filter"}']);
  }
  const errors: string[] = [];
  const name = typeof body.name === "string" ? body.name.trim() : "";
  if (!name) errors.push("name: give the release a name");
  else if (name.length > 200) errors.push("name: at most 200 characters");
  if (body.description != null && typeof body.description !== "string") errors.push("description: give text");
  if (body.version != null && typeof body.version !== "string" && typeof body.version !== "number")
    errors.push("version: give text");
  const filter = filterFromObject(body.filter, errors);
  const db = getDb();
  if (filter?.curve) {
    const e = knownCurveError(db, filter.curve);
    if (e) errors.push(`filter.${e}`);
  }
  if (errors.length > 0 || !filter) return badParameters(errors);
  try {
    const published = publishRelease(db, {
      name,
      version: body.version != null ? String(body.version) : nextVersion(db, name),
      description: (body.description as string | undefined) ?? null,
      filter,
      userId: user.id,
      baseUrl: `${new URL(request.url).origin}/releases/`,
    });
    return json({ slug: published.slug, checksum: published.checksum, count: published.count }, { status: 201 });
  } catch (e) {
    if (e instanceof PublishRefused)
      return json({ error: e.message, errors: [`${e.field}: ${e.message}`] }, { status: e.field === "version" ? 409 : 400 });
    throw e;
  }
}

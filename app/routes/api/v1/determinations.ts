import type { Route } from "./+types/determinations";
import { requireApiRole, requireApiUser } from "#app/auth/api.server.ts";
import { clientAddress } from "#app/auth/session.server.ts";
import { getDb } from "#app/db/client.server.ts";
import { CommitRefused } from "#app/models/submission/uploads/commit.server.ts";
import { submitJsonRowsOffThread } from "#app/models/submission/uploads/off-thread.server.ts";
import { apiDeterminations, parseApiQuery } from "#app/models/registry/determinations-api.server.ts";
import { cachedJson } from "#app/models/registry/read-cache.server.ts";
import { json } from "#app/utils/http.server.ts";

/*
 * POST /api/v1/determinations — a contract outside scripts rely on. Body: a JSON array of rows
 * with the upload template's column names and the same validation. All valid → 201
 * {"determination_ids":[…],"warnings":[…]} in the order sent; otherwise 400 {"errors":[{"index","row",
 * "column","message"}],"warnings":[…]} with index 0-based and row = index + 1, and nothing written.
 * Warnings (same shape) never block: assumed dose-rate inputs, a site on the other hemisphere's curve.
 * (GET on this path — the Explore API — belongs in this module's loader.)
 */

/**
 * GET /api/v1/determinations — the Explore query as JSON, for any valid personal token. Query:
 * Explore's filters (method, material, lab, site, kind, status, grade, ageFrom, ageTo, calFrom,
 * calTo, q, sort, dir), page and per_page (≤ 500). 200 {"page","per_page","total",
 * "determinations":[…]}; a malformed parameter → 400 {"errors":[…]}; no token → 401.
 */
export async function loader({ request }: Route.LoaderArgs) {
  await requireApiUser(request);
  const parsed = parseApiQuery(new URL(request.url).searchParams);
  if (!parsed.ok) return json({ errors: parsed.errors }, { status: 400 });
  const db = getDb();
  return cachedJson(
    db,
    request,
    `api-determinations:${JSON.stringify(parsed.query)}`,
    () => apiDeterminations(db, parsed.query),
    {
      "Cache-Control": "private, no-cache",
    },
  );
}

export const MAX_API_ROWS = 10_000;
const MAX_BODY_BYTES = 16 * 1024 * 1024;

export async function action({ request }: Route.ActionArgs) {
  const user = await requireApiRole(request, "contributor");
  if (request.method !== "POST") return json({ error: "Use POST." }, { status: 405, headers: { Allow: "GET, POST" } });
  if (Number(request.headers.get("Content-Length") ?? 0) > MAX_BODY_BYTES) {
    return json(
      {
        errors: [
          {
            index: null,
            row: null,
            column: "",
            message: `The body is larger than ${MAX_BODY_BYTES / 1024 / 1024} MB; send fewer rows at a time.`,
          },
        ],
      },
      { status: 413 },
    );
  }
  let body: unknown;
  try {
    body = await request.json();
  } catch {
    return json({ errors: [{ index: null, row: null, column: "", message: "The body is not valid JSON." }] }, { status: 400 });
  }
  if (!Array.isArray(body) || body.length === 0) {
    return json(
      { errors: [{ index: null, row: null, column: "", message: "Send a non-empty JSON array of rows." }] },
      { status: 400 },
    );
  }
  if (body.length > MAX_API_ROWS) {
    return json(
      {
        errors: [
          { index: null, row: null, column: "", message: `At most ${MAX_API_ROWS} rows per request (got ${body.length}).` },
        ],
      },
      { status: 413 },
    );
  }
  try {
    const result = await submitJsonRowsOffThread(getDb(), body, { userId: user.id }, { ip: clientAddress(request) });
    if (!result.ok) return json({ errors: result.errors, warnings: result.warnings }, { status: 400 });
    return json({ determination_ids: result.determinationIds, warnings: result.warnings }, { status: 201 });
  } catch (e) {
    if (e instanceof CommitRefused)
      return json({ errors: [{ index: null, row: null, column: "", message: e.message }] }, { status: e.status });
    throw e;
  }
}

import type { Route } from "./+types/constraints-summary";
import { getOptionalUser } from "#app/auth/session.server.ts";
import { getDb } from "#app/db/client.server.ts";
import { selectionCount } from "#app/models/registry/constraints.server.ts";
import { selectionSummary } from "#app/models/releases/selection-summary.server.ts";
import { normaliseFormParams, parseConstraintFilter } from "#app/utils/constraint-filter.ts";
import { json } from "#app/utils/http.server.ts";

/** GET /constraints/summary?…filter…[&count_only=1] — the live count (and density, sites) for the page; signed in. */
export async function loader({ request }: Route.LoaderArgs) {
  const user = await getOptionalUser(request);
  if (!user) return json({ error: "Sign in to build constraint sets." }, { status: 401 });
  const params = normaliseFormParams(new URL(request.url).searchParams);
  const countOnly = params.get("count_only") === "1";
  params.delete("count_only");
  // The page's fetcher asks through React Router's data request, which names the route it wants in
  // `_routes`; that is not part of the filter.
  params.delete("_routes");
  const parsed = parseConstraintFilter(params);
  if (!parsed.ok) return json({ errors: parsed.errors }, { status: 400 });
  const db = getDb();
  if (countOnly) return json({ count: selectionCount(db, parsed.filter) });
  return json(selectionSummary(db, parsed.filter), { headers: { "Cache-Control": "no-store" } });
}

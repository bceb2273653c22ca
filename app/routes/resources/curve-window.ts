import { eq } from "drizzle-orm";
import type { Route } from "./+types/curve-window";
import { clientAddress } from "#app/auth/session.server.ts";
import { getDb } from "#app/db/client.server.ts";
import { curves } from "#app/db/schema.ts";
import { activeCurve, curveWindow } from "#app/models/calibration/curves.server.ts";
import { json } from "#app/utils/http.server.ts";
import { hit } from "#app/utils/rate-limit.server.ts";

/**
 * GET /api/curve-window?curve=intcal20&from=12500&to=11500 (or curve_id=3): the curve rows a
 * calibration plot draws, thinned. Curves are published open data, so this is public.
 */
export async function loader({ request }: Route.LoaderArgs) {
  // Public data; a generous per-address rate limit keeps it from being used to scrape in bulk.
  const limited = hit(`api.curve-window:${clientAddress(request)}`, 600, 60_000);
  if (!limited.allowed) {
    return json({ error: "Too many requests." }, { status: 429, headers: { "Retry-After": String(limited.retryAfterS) } });
  }
  const url = new URL(request.url);
  const from = Number(url.searchParams.get("from"));
  const to = Number(url.searchParams.get("to"));
  if (
    !Number.isFinite(from) ||
    !Number.isFinite(to) ||
    url.searchParams.get("from") === null ||
    url.searchParams.get("to") === null
  ) {
    return json({ error: "Give the window as from and to, in cal BP." }, { status: 400 });
  }
  const db = getDb();
  const idParam = url.searchParams.get("curve_id");
  const curve = idParam
    ? db
        .select()
        .from(curves)
        .where(eq(curves.id, Number(idParam)))
        .get()
    : activeCurve(db, url.searchParams.get("curve") ?? "intcal20");
  if (!curve) return json({ error: "No such curve." }, { status: 404 });
  return json(
    {
      curve: {
        id: curve.id,
        name: curve.name,
        displayName: curve.displayName,
        kind: curve.kind,
        version: curve.version,
        citation: curve.citation,
        doi: curve.doi,
      },
      window: { from, to },
      points: curveWindow(db, curve.id, from, to),
    },
    { headers: { "Cache-Control": "public, max-age=300" } },
  );
}

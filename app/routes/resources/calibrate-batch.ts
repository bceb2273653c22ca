import type { Route } from "./+types/calibrate-batch";
import { clientAddress } from "#app/auth/session.server.ts";
import { getDb } from "#app/db/client.server.ts";
import { calibrationItemSchema } from "#app/models/calibration/calibrate-items.server.ts";
import { CalibrationStopped } from "#app/models/calibration/calibrate-work.server.ts";
import {
  calibrateForPageAnywhere,
  PAGE_BATCH_ITEMS,
  plotForPage,
  spendPageWork,
} from "#app/models/calibration/calibrate-page.server.ts";
import type { CalibrationItem } from "#app/utils/calibrate-input.ts";
import { json } from "#app/utils/http.server.ts";
import { hit } from "#app/utils/rate-limit.server.ts";

/**
 * POST /calibrate/batch: the calibration page's script calibrating a slice of its sheet (at most
 * PAGE_BATCH_ITEMS items): each item's summary and sparkline, and with `"plot": true` and one item
 * the large plot. JSON in the shape of POST /api/v1/calibrate's items; nothing is stored.
 */
export async function loader(_: Route.LoaderArgs) {
  // Public route; only the page's POST calibrates.
  return json({ error: "Calibrate on the calibration page." }, { status: 405, headers: { Allow: "POST" } });
}

/** Slices per client address per minute: a 5,000-row sheet is 50 slices. */
const SLICES_PER_MINUTE = 120;

export async function action({ request }: Route.ActionArgs) {
  // Public route: the access check is the per-address rate limit (requests, then work).
  const address = clientAddress(request);
  const limited = hit(`page.calibrate-batch:${address}`, SLICES_PER_MINUTE, 60_000);
  if (!limited.allowed) {
    return json(
      { error: `Too many requests; try again in ${limited.retryAfterS} s.` },
      { status: 429, headers: { "Retry-After": String(limited.retryAfterS) } },
    );
  }
  let body: unknown;
  try {
    body = JSON.parse(await request.text());
  } catch {
    return json({ error: "The request body is not valid JSON." }, { status: 400 });
  }
  const { items, plot } = (typeof body === "object" && body !== null ? body : {}) as { items?: unknown; plot?: unknown };
  if (!Array.isArray(items) || items.length === 0 || items.length > PAGE_BATCH_ITEMS) {
    return json({ error: `Send 1 to ${PAGE_BATCH_ITEMS} items at a time.` }, { status: 400 });
  }
  const db = getDb();
  const spent = spendPageWork(db, items, address);
  if ("message" in spent) {
    const headers = spent.retryAfterS ? { "Retry-After": String(spent.retryAfterS) } : undefined;
    return json({ error: spent.message }, { status: spent.status, headers });
  }
  let answer: Awaited<ReturnType<typeof calibrateForPageAnywhere>>;
  try {
    answer = await calibrateForPageAnywhere(db, items, spent.work);
  } catch (error) {
    if (error instanceof CalibrationStopped) return json({ error: error.message }, { status: error.status });
    throw error;
  }
  if (plot === true && items.length === 1) {
    const first = answer.results[0];
    const parsed = calibrationItemSchema.safeParse(items[0]);
    if (first && "median_cal_bp" in first && parsed.success) {
      const item: CalibrationItem = { ...parsed.data, id: String(first.id), curve: parsed.data.curve.toLowerCase() };
      return json({ ...answer, plot: plotForPage(db, item, first) });
    }
  }
  return json({ ...answer, plot: null });
}

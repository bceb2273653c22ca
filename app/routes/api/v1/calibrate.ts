import type { Route } from "./+types/calibrate";
import { clientAddress } from "#app/auth/session.server.ts";
import { getDb } from "#app/db/client.server.ts";
import { calibrateItems, parseCalibrationRequest } from "#app/models/calibration/calibrate-items.server.ts";
import { json } from "#app/utils/http.server.ts";
import { hit } from "#app/utils/rate-limit.server.ts";

/*
 * POST /api/v1/calibrate — public, no sign-in. A contract outside scripts rely on: keep the
 * request and response shapes exactly as documented on the calibration page.
 */

/** Requests per client address per window. */
export const CALIBRATE_RATE_LIMIT = { limit: 60, windowMs: 60_000 } as const;
/** 10,000 items with long ids stay well below this. */
const MAX_BODY_BYTES = 8 * 1024 * 1024;

export async function loader(_: Route.LoaderArgs) {
  // Public endpoint; only POST calibrates.
  return json(
    { error: "Use POST with a JSON body; see /calibrate for the request format." },
    { status: 405, headers: { Allow: "POST" } },
  );
}

export async function action({ request }: Route.ActionArgs) {
  // Public endpoint: the access check is the per-address rate limit.
  try {
    if (request.method !== "POST") {
      return json({ error: "Use POST." }, { status: 405, headers: { Allow: "POST" } });
    }
    const limited = hit(`api.calibrate:${clientAddress(request)}`, CALIBRATE_RATE_LIMIT.limit, CALIBRATE_RATE_LIMIT.windowMs);
    if (!limited.allowed) {
      return json(
        { error: `Too many requests; try again in ${limited.retryAfterS} s.` },
        { status: 429, headers: { "Retry-After": String(limited.retryAfterS) } },
      );
    }
    const declared = Number(request.headers.get("Content-Length") ?? 0);
    if (declared > MAX_BODY_BYTES) return tooLarge();
    const text = await request.text();
    if (text.length > MAX_BODY_BYTES) return tooLarge();
    let body: unknown;
    try {
      body = JSON.parse(text);
    } catch {
      return json({ error: "The request body is not valid JSON." }, { status: 400 });
    }
    const parsed = parseCalibrationRequest(body);
    if (!parsed.ok) return json({ error: parsed.error }, { status: 400 });
    const result = calibrateItems(getDb(), parsed.request.items, { density: parsed.request.density });
    return json(result);
  } catch (error) {
    console.error("POST /api/v1/calibrate failed", error);
    return json({ error: "The calibration could not be completed; please try again." }, { status: 503 });
  }
}

function tooLarge() {
  return json({ error: `The request body is larger than ${MAX_BODY_BYTES / 1024 / 1024} MB.` }, { status: 413 });
}

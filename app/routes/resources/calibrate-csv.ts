import type { Route } from "./+types/calibrate-csv";
import { clientAddress } from "#app/auth/session.server.ts";
import { getDb } from "#app/db/client.server.ts";
import { answerPageForm, receivePageForm } from "#app/models/calibration/calibrate-page.server.ts";
import { CSV_FILE_NAME, resultsCsv } from "#app/utils/calibrate-results.ts";
import { json } from "#app/utils/http.server.ts";
import { hit } from "#app/utils/rate-limit.server.ts";

/**
 * POST /calibrate/results.csv: the calibration page's form (posted without script), answered with
 * its results as a CSV download. With script the page writes the same file itself. Spreadsheet-safe
 * through toCsv/safeCell.
 */
export async function loader(_: Route.LoaderArgs) {
  // Public route; only POST (the page's form) produces a file.
  return json({ error: "Download the CSV from the calibration page." }, { status: 405, headers: { Allow: "POST" } });
}

export async function action({ request }: Route.ActionArgs) {
  // Public route: the access check is the per-address rate limit shared with the calibration page.
  const limited = hit(`page.calibrate:${clientAddress(request)}`, 60, 60_000);
  if (!limited.allowed) {
    return new Response(`Too many requests; try again in ${limited.retryAfterS} s.`, {
      status: 429,
      headers: { "Retry-After": String(limited.retryAfterS), "Content-Type": "text/plain; charset=utf-8" },
    });
  }
  const answer = await answerPageForm(getDb(), await receivePageForm(request), {
    plot: false,
    address: clientAddress(request),
  });
  if (answer.problem) {
    return new Response(answer.problem, { status: answer.status, headers: { "Content-Type": "text/plain; charset=utf-8" } });
  }
  return new Response(resultsCsv(answer.rows, answer.curves, answer.form.scale), {
    headers: {
      "Content-Type": "text/csv; charset=utf-8",
      "Content-Disposition": `attachment; filename="${CSV_FILE_NAME}"`,
      "Cache-Control": "no-store",
    },
  });
}

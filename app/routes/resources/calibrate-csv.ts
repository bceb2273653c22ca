import type { Route } from "./+types/calibrate-csv";
import { clientAddress } from "#app/auth/session.server.ts";
import { getDb } from "#app/db/client.server.ts";
import { calibrateItems } from "#app/models/calibration/calibrate-items.server.ts";
import { listCurves } from "#app/models/calibration/curves.server.ts";
import { formatCalendarYear } from "#app/science/calendar.ts";
import { entriesFromPageInput, hasItem, MAX_CALIBRATION_ITEMS, mergeResults, pageInputFrom } from "#app/utils/calibrate-input.ts";
import { toCsv } from "#app/utils/csv.ts";
import { json } from "#app/utils/http.server.ts";
import { hit } from "#app/utils/rate-limit.server.ts";

/**
 * POST /calibrate/results.csv: the calibration page's form, answered with its results as a CSV
 * download (works with or without script). Spreadsheet-safe through toCsv/safeCell.
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
  const form = await request.formData();
  const input = pageInputFrom(form);
  const bcad = form.get("scale") === "bcad";
  const db = getDb();
  const curves = listCurves(db).filter((c) => c.active);
  const marine = curves.some((c) => c.name === input.curve.toLowerCase() && c.kind === "marine");
  const entries = entriesFromPageInput(input, marine);
  if (entries.length > MAX_CALIBRATION_ITEMS) {
    return new Response(`At most ${MAX_CALIBRATION_ITEMS} ages at a time.`, {
      status: 400,
      headers: { "Content-Type": "text/plain; charset=utf-8" },
    });
  }
  const response = calibrateItems(
    db,
    entries.filter(hasItem).map((e) => e.item),
  );
  const rows = mergeResults(entries, response.results);
  const ranges = (list: { from: number; to: number; p: number }[] | undefined) =>
    list
      ?.map((r) =>
        bcad
          ? `${formatCalendarYear(r.from)} to ${formatCalendarYear(r.to)} (${r.p.toFixed(3)})`
          : `${r.from} to ${r.to} (${r.p.toFixed(3)})`,
      )
      .join("; ") ?? "";
  const header = [
    "id",
    "c14_age_yr_bp",
    "c14_error_yr",
    "curve",
    "curve_version",
    "delta_r_yr",
    "delta_r_error_yr",
    "median_cal_bp",
    ...(bcad ? ["median_bc_ad"] : []),
    bcad ? "hpd68_bc_ad" : "hpd68_cal_bp",
    bcad ? "hpd95_bc_ad" : "hpd95_cal_bp",
    "error",
  ];
  const body = toCsv(
    header,
    rows.map((r) => [
      r.id,
      r.item?.c14_age,
      r.item?.c14_error,
      r.item?.curve,
      r.item ? (response.curves[r.item.curve]?.version ?? "") : "",
      r.item?.delta_r,
      r.item?.delta_r_error,
      r.result?.median_cal_bp,
      ...(bcad ? [r.result ? formatCalendarYear(r.result.median_cal_bp) : ""] : []),
      ranges(r.result?.hpd68),
      ranges(r.result?.hpd95),
      r.error ?? "",
    ]),
  );
  const citations = Object.entries(response.curves).map(([name, c]) => `# ${name} ${c.version}: ${c.citation}`);
  const preface = [
    "# Thawline calibration results; ranges are highest-density ranges, older bound first, with their probability.",
    ...citations,
  ]
    .map((l) => `"${l.replace(/"/g, '""')}"`)
    .join("\r\n");
  return new Response(`${preface}\r\n${body}`, {
    headers: {
      "Content-Type": "text/csv; charset=utf-8",
      "Content-Disposition": 'attachment; filename="thawline-calibration.csv"',
      "Cache-Control": "no-store",
    },
  });
}

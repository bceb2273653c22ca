// The calibration page's results: one row per sheet row with its summary, a compact copy of the
// calendar density for the table's sparkline, and the results as a CSV file (spreadsheet-safe).
// Client-safe: the server builds the sparklines, the browser and the server both write the CSV.

import { formatCalendarYear } from "#app/science/calendar.ts";
import type { ApiRange } from "#app/utils/calibrate-input.ts";
import type { SheetRow } from "#app/utils/calibrate-sheet.ts";
import { toCsv } from "#app/utils/csv.ts";

/** A calendar density in a few bins, from the older end to the younger, scaled to a peak of 1. */
export type Spark = { older: number; younger: number; values: number[] };
export type Summary = { median_cal_bp: number; hpd68: ApiRange[]; hpd95: ApiRange[]; spark: Spark };
export type PageResult = ({ id: string | number } & Summary) | { id: string | number | null; error: string };
export type ResultRow = SheetRow & { result?: Summary; error?: string };
export type CurvesUsed = Record<string, { version: string; citation: string }>;
export type CalendarScale = "bp" | "bcad";

export const SPARK_BINS = 48;
/** Probability left out at each end of a sparkline's window. */
const TAIL = 0.0005;

/**
 * The density on a 1-year grid (`values[0]` at `startCalBp`, the younger end) in `bins` bins over the
 * window holding all but the outermost tails, older bin first, each the bin's mean scaled to the peak.
 */
export function sparkFromDensity(startCalBp: number, values: ArrayLike<number>, bins = SPARK_BINS): Spark {
  const n = values.length;
  let total = 0;
  for (let i = 0; i < n; i++) total += values[i]!;
  if (n === 0 || !(total > 0)) return { older: startCalBp, younger: startCalBp, values: [] };
  let lo = 0;
  for (let acc = 0; lo < n - 1 && (acc += values[lo]!) < TAIL * total;) lo++;
  let hi = n - 1;
  for (let acc = 0; hi > lo && (acc += values[hi]!) < TAIL * total;) hi--;
  const span = hi - lo + 1;
  const count = Math.min(bins, span);
  const out = new Array<number>(count).fill(0);
  for (let b = 0; b < count; b++) {
    // bin b counts from the older end
    const a = hi - Math.floor(((b + 1) * span) / count) + 1;
    const z = hi - Math.floor((b * span) / count);
    let s = 0;
    for (let i = a; i <= z; i++) s += values[i]!;
    out[b] = s / (z - a + 1);
  }
  const peak = Math.max(...out);
  return {
    older: startCalBp + hi,
    younger: startCalBp + lo,
    values: out.map((v) => Math.round((v / peak) * 1000) / 1000),
  };
}

/** Sheet rows with the calibration results in the order the calibrated items were sent. */
export function joinResults(rows: SheetRow[], results: PageResult[]): ResultRow[] {
  let k = 0;
  return rows.map((row) => {
    if (!row.item) return row;
    const r = results[k++];
    if (!r) return row;
    return "error" in r ? { ...row, error: r.error } : { ...row, result: summaryOf(r) };
  });
}

function summaryOf(r: Extract<PageResult, { median_cal_bp: number }>): Summary {
  return { median_cal_bp: r.median_cal_bp, hpd68: r.hpd68, hpd95: r.hpd95, spark: r.spark };
}

function rangesText(list: ApiRange[] | undefined, scale: CalendarScale): string {
  if (!list) return "";
  return list
    .map((r) => {
      const from = scale === "bcad" ? formatCalendarYear(r.from) : String(r.from);
      const to = scale === "bcad" ? formatCalendarYear(r.to) : String(r.to);
      return `${from} to ${to} (${(r.p * 100).toFixed(1)} %)`;
    })
    .join("; ");
}

export const CSV_FILE_NAME = "thawline-calibration.csv";

/**
 * The results as CSV: a commented preface naming the curves, then one line per sheet row (rows
 * that were not calibrated keep their problems). Every cell goes through toCsv's safeCell.
 */
export function resultsCsv(rows: ResultRow[], curves: CurvesUsed, scale: CalendarScale): string {
  const header = [
    "row",
    "lab_code",
    "c14_age",
    "c14_error",
    "curve",
    "curve_version",
    "delta_r",
    "delta_r_error",
    "median_cal_bp",
    ...(scale === "bcad" ? ["median_bc_ad", "hpd68_bc_ad", "hpd95_bc_ad"] : ["hpd68_cal_bp", "hpd95_cal_bp"]),
    "problems",
  ];
  const body = toCsv(
    header,
    rows.map((r) => [
      r.row,
      r.label,
      r.item ? Math.round(r.item.c14_age * 10) / 10 : null,
      r.item ? Math.round(r.item.c14_error * 10) / 10 : null,
      r.item?.curve,
      r.item ? (curves[r.item.curve]?.version ?? "") : "",
      r.item?.delta_r,
      r.item?.delta_r_error,
      r.result?.median_cal_bp,
      ...(scale === "bcad" ? [r.result ? formatCalendarYear(r.result.median_cal_bp) : ""] : []),
      rangesText(r.result?.hpd68, scale),
      rangesText(r.result?.hpd95, scale),
      [...r.problems.map((p) => (p.column ? `${p.column}: ${p.message}` : p.message)), ...(r.error ? [r.error] : [])].join(" "),
    ]),
  );
  const preface = [
    "# Thawline calibration results. Ranges are highest-density ranges in cal BP, older bound first, with their probability.",
    ...Object.entries(curves).map(([name, c]) => `# ${name} ${c.version}: ${c.citation}`),
  ]
    .map((l) => `"${l.replace(/"/g, '""')}"`)
    .join("\r\n");
  return `${preface}\r\n${body}`;
}

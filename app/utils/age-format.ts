// Display-only formatting of measured and calibrated ages. Values stay unrounded in the database;
// everything here rounds for reading. Client-safe (no server imports).

import { groupThousands } from "#app/science/calendar.ts";
import { formatWithError } from "#app/science/precision.ts";

export type MeasuredAgeFields = {
  method: string;
  c14AgeYr: number | null;
  c14ErrorYr: number | null;
  f14c?: number | null;
  f14cError?: number | null;
  isLimit: boolean;
  deGy: number | null;
  deErrorGy: number | null;
  doseRateGyPerKa: number | null;
  doseRateErrorGyPerKa: number | null;
};

const LIBBY_MEAN_LIFE = 8033;

/**
 * The units every page writes, once each. Radiocarbon years are "¹⁴C yr BP" (ages) and "¹⁴C yr"
 * (errors, offsets); calendar ages always carry "cal BP"; the 1σ is said once, beside the error.
 */
export const UNITS = {
  c14Age: "¹⁴C yr BP",
  c14Years: "¹⁴C yr",
  calBp: "cal BP",
  ka: "ka",
  gy: "Gy",
  gyPerKa: "Gy/ka",
  permil: "‰",
  f14c: "F¹⁴C",
  oneSigma: "1σ",
} as const;

/** A count with thousands separators: "3,042". */
export function formatCount(n: number | null | undefined): string {
  return n == null ? "" : groupThousands(Math.round(n));
}

/**
 * A value and its 1σ at honest precision — the one rule, in science/precision.ts: the error to two
 * significant figures, the value to the same decimal place ("2.069 ± 0.017", "10,250 ± 45",
 * "12,350 ± 570"); without a usable error, the value at three significant figures.
 */
export { formatWithError } from "#app/science/precision.ts";

/** A lone measured value: at most four significant figures, thousands grouped, no trailing zeros. */
export function formatPlain(value: number | null | undefined, unit = ""): string {
  if (value == null || !Number.isFinite(value)) return "—";
  const u = unit ? ` ${unit}` : "";
  if (Math.abs(value) >= 1000) return `${groupThousands(Math.round(value))}${u}`;
  const s = String(Number(value.toPrecision(4)));
  return `${s}${u}`;
}

/** Radiocarbon ages are conventionally rounded to 5 or 10 years; show the nearest whole year, grouped. */
export function formatYears(n: number): string {
  return groupThousands(Math.round(n));
}

/** Luminescence age and 1σ in ka (De / dose rate; relative errors in quadrature). */
export function luminescenceKa(d: MeasuredAgeFields): { ageKa: number; errorKa: number | null } | null {
  if (d.deGy == null || d.doseRateGyPerKa == null || !(d.doseRateGyPerKa > 0)) return null;
  const ageKa = d.deGy / d.doseRateGyPerKa;
  if (d.deErrorGy == null || d.doseRateErrorGyPerKa == null || !(d.deGy > 0)) return { ageKa, errorKa: null };
  const rel = Math.hypot(d.deErrorGy / d.deGy, d.doseRateErrorGyPerKa / d.doseRateGyPerKa);
  return { ageKa, errorKa: ageKa * rel };
}

/** "10,250 ± 45 ¹⁴C yr BP", "> 45,000 ¹⁴C yr BP", "12.3 ± 0.8 ka"; an em dash when nothing is measured. */
export function formatMeasuredAge(d: MeasuredAgeFields): string {
  if (d.method === "radiocarbon") {
    let age = d.c14AgeYr;
    let error = d.c14ErrorYr;
    if (age == null && d.f14c != null && d.f14c > 0) {
      age = -LIBBY_MEAN_LIFE * Math.log(d.f14c);
      error = d.f14cError != null ? (LIBBY_MEAN_LIFE * d.f14cError) / d.f14c : null;
    }
    if (age == null) return "—";
    if (d.isLimit) return `> ${formatYears(age)} ${UNITS.c14Age}`;
    return error != null ? `${formatYears(age)} ± ${formatYears(error)} ${UNITS.c14Age}` : `${formatYears(age)} ${UNITS.c14Age}`;
  }
  if (d.method === "luminescence") {
    const lum = luminescenceKa(d);
    if (!lum) return "—";
    // the error to two significant figures, the age to the same place (as everywhere)
    return formatWithError(lum.ageKa, lum.errorKa, UNITS.ka);
  }
  return "—";
}

/** "12,345" (cal BP is said in the column heading). */
export function formatCal(n: number | null | undefined): string {
  return n == null ? "" : formatYears(n);
}

/** "12,900–12,400" — oldest first, as ranges in cal BP are read. */
export function formatCalRange(from: number | null | undefined, to: number | null | undefined): string {
  if (from == null || to == null) return "";
  const older = Math.max(from, to);
  const younger = Math.min(from, to);
  return `${formatYears(older)}–${formatYears(younger)}`;
}

export function formatProbability(p: number): string {
  return `${(p * 100).toFixed(1)} %`;
}

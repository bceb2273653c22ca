// What every automatic check receives and returns. Pure: the orchestration in
// app/models/review/ loads these from the database and writes the results back.

import { groupThousands } from "../calendar.ts";
import type { CheckKind, CheckSeverity, ConstraintKind, Flag, Method } from "#app/db/schema.ts";
import type { CalendarDensity } from "../density.ts";
import type { DoseRateFields } from "../dose-rate-fields.ts";

export type { CheckKind, CheckSeverity, Flag };

/** A determination's calendar age as the checks use it: the stored density and its moments. */
export interface CalendarAge {
  density: CalendarDensity;
  medianCalBp: number;
  meanCalBp: number;
  /** Standard deviation of the density, years. */
  sdYears: number;
}

/** One determination with the context the checks need (site, sample, calibration). */
export interface CheckItem {
  id: number;
  labCode: string;
  labId: number;
  method: Method;
  constraintKind: ConstraintKind;
  sampleId: number;
  siteId: number;
  latitude: number;
  longitude: number;
  material: string;
  /** The material is marine (shells, foraminifera, marine mammal bone). */
  marineMaterial: boolean;
  depthCm: number | null;
  stratUnit: string | null;
  /** 1 = uppermost unit of the site's column. */
  stratOrder: number | null;
  /** Latest reviewer grade, 0–3, or null while ungraded. */
  grade: number | null;
  c14AgeYr: number | null;
  c14ErrorYr: number | null;
  f14c: number | null;
  f14cError: number | null;
  isLimit: boolean;
  curveName: string | null;
  deltaRYr: number | null;
  deltaRErrorYr: number | null;
  deltaRCurve: string | null;
  deGy: number | null;
  deErrorGy: number | null;
  doseRateGyPerKa: number | null;
  doseRateErrorGyPerKa: number | null;
  measurementYear: number | null;
  /** Current calibration, or null when there is none (limit, post-bomb, beyond the curve, failed). */
  calendar: CalendarAge | null;
  /** Why there is no calendar age, when the calibration recorded one. */
  calibrationError: string | null;
  /** A luminescence row's stored dose-rate inputs, so the assumptions made for it are checked too. */
  doseRateFields?: DoseRateFields | null;
}

export interface CheckResult {
  check: CheckKind;
  severity: CheckSeverity;
  /** One plain sentence with the numbers behind it. */
  message: string;
  details: Record<string, unknown>;
  /** Suggested to the reviewer, never applied by itself. */
  suggestedFlag: Flag | null;
}

export const SEVERITY_RANK: Readonly<Record<CheckSeverity, number>> = { pass: 0, note: 1, warning: 2, conflict: 3 };

export function result(
  check: CheckKind,
  severity: CheckSeverity,
  message: string,
  details: Record<string, unknown> = {},
  suggestedFlag: Flag | null = null,
): CheckResult {
  return { check, severity, message, details, suggestedFlag };
}

/** Whole years with thousands separators, for messages. */
export function yr(x: number): string {
  // The same digits as toLocaleString("en-GB"), without Intl's cost in a run over the whole registry.
  return groupThousands(Math.round(x));
}

/** A probability for a message: two decimals, never printed as a bare 1.00 or 0.00. */
export function prob(p: number): string {
  if (p > 0.995 && p < 1) return "> 0.99";
  if (p < 0.005 && p > 0) return "< 0.01";
  return p.toFixed(2);
}

/** Constraint kinds that say the site was free of ice at the dated time. */
export function saysIceFree(kind: ConstraintKind): boolean {
  return kind === "minimum" || kind === "direct";
}

/** Mean and standard deviation of a grid density (years). */
export function densityMoments(density: CalendarDensity): { mean: number; sd: number } {
  const v = density.values;
  let total = 0;
  let m1 = 0;
  for (let i = 0; i < v.length; i++) {
    total += v[i];
    m1 += i * v[i];
  }
  const meanIndex = m1 / total;
  let m2 = 0;
  for (let i = 0; i < v.length; i++) m2 += v[i] * (i - meanIndex) ** 2;
  return { mean: density.startCalBp + meanIndex, sd: Math.sqrt(m2 / total) };
}

/**
 * Every year a's stored density covers is younger than every year b's covers, so P(a older
 * than b) is 0 (the stored densities are trimmed where they fall below 1e−6 of their peak).
 */
export function clearlyYounger(a: CalendarAge, b: CalendarAge): boolean {
  return a.density.startCalBp + a.density.values.length - 1 < b.density.startCalBp;
}

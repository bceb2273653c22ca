// Check 1, value range: "greater than" ages, post-bomb ages, ages the curve cannot calibrate,
// and errors too small or too large to be believed.

import { doseRateFieldIssues, type DoseRateField } from "../dose-rate-fields.ts";
import { luminescenceAge } from "../luminescence.ts";
import { result, SEVERITY_RANK, yr, type CheckItem, type CheckResult } from "./types.ts";

/**
 * Error bounds [common practice]: AMS counting errors below about 15 14C yr are not achieved in
 * routine work; above 10 % of the age the date constrains little. Luminescence ages with a
 * combined error under 3 % are implausible for field samples (CHECK_VALUES B7 for dose rates);
 * above 25 % the age says little.
 */
export const VALUE_LIMITS = {
  minC14ErrorYr: 15,
  maxC14RelativeError: 0.1,
  minLuminescenceRelativeError: 0.03,
  minDoseRateRelativeError: 0.03,
  maxLuminescenceRelativeError: 0.25,
} as const;

const CHECK = "value_range" as const;

export function checkValueRange(item: CheckItem): CheckResult {
  if (item.method === "radiocarbon") return radiocarbonRange(item);
  if (item.method === "luminescence") return luminescenceRange(item);
  if (item.calendar) return result(CHECK, "pass", "The age lies within the range the registry can interpret.");
  return result(CHECK, "note", `No calendar age: ${item.calibrationError ?? "not computed for this method yet"}.`);
}

function radiocarbonRange(item: CheckItem): CheckResult {
  const age = item.c14AgeYr;
  const error = item.c14ErrorYr;
  if (item.isLimit) {
    return result(
      CHECK,
      "note",
      `Reported as greater than ${age === null ? "its limit" : `${yr(age)} ¹⁴C yr BP`}: a limit, stored but not calibrated.`,
      { limitYr: age },
    );
  }
  if ((item.f14c !== null && item.f14c > 1) || (age !== null && age < 0)) {
    return result(
      CHECK,
      "warning",
      `Post-bomb result (${item.f14c !== null ? `F14C ${item.f14c.toFixed(4)}` : `${yr(age!)} ¹⁴C yr BP`}): younger than AD 1950 and not a deglacial age.`,
      { f14c: item.f14c, c14AgeYr: age },
      "young_carbon",
    );
  }
  if (!item.calendar && item.calibrationError && /beyond the curve|matches no part/.test(item.calibrationError)) {
    return result(CHECK, "warning", item.calibrationError, { c14AgeYr: age, c14ErrorYr: error });
  }
  if (age !== null && error !== null) {
    if (error < VALUE_LIMITS.minC14ErrorYr) {
      return result(
        CHECK,
        "warning",
        `The error of ± ${yr(error)} yr is below the ${VALUE_LIMITS.minC14ErrorYr} yr that routine measurements reach; check that it is a 1σ error.`,
        { c14ErrorYr: error, minErrorYr: VALUE_LIMITS.minC14ErrorYr },
      );
    }
    if (age > 0 && error / age > VALUE_LIMITS.maxC14RelativeError) {
      return result(
        CHECK,
        "note",
        `The error of ± ${yr(error)} yr is ${((100 * error) / age).toFixed(0)} % of the age: the date constrains little.`,
        { c14AgeYr: age, c14ErrorYr: error, relativeError: error / age },
      );
    }
  }
  if (!item.calendar) {
    return result(CHECK, "note", `No calendar age: ${item.calibrationError ?? "not calibrated yet"}.`);
  }
  return result(CHECK, "pass", `${yr(age ?? 0)} ± ${yr(error ?? 0)} ¹⁴C yr BP lies within the curve with a plausible error.`, {
    c14AgeYr: age,
    c14ErrorYr: error,
  });
}

/**
 * What a computed dose rate assumed or lacks (the same warnings the form shows at the field):
 * a missing a-value or a signal that contradicts the mineral is a warning; a published default
 * put in for a missing input (internal K, grain size, density) or no cosmic term is a note.
 */
const DOSE_RATE_WARNING_FIELDS: ReadonlySet<DoseRateField> = new Set(["a_value", "mineral", "burial_depth_m"]);

function withDoseRateInputs(item: CheckItem, base: CheckResult): CheckResult {
  const issues = item.doseRateFields ? doseRateFieldIssues(item.doseRateFields) : [];
  if (issues.length === 0) return base;
  const worst = issues.some((i) => DOSE_RATE_WARNING_FIELDS.has(i.field)) ? "warning" : "note";
  const severity = SEVERITY_RANK[worst] > SEVERITY_RANK[base.severity] ? worst : base.severity;
  const message = `${base.message} Dose-rate inputs: ${issues.map((i) => i.message).join(" ")}`;
  const flag = base.suggestedFlag ?? (worst === "warning" ? "dose_rate_uncertain" : null);
  return result(CHECK, severity, message, { ...base.details, doseRateInputIssues: issues }, flag);
}

function luminescenceRange(item: CheckItem): CheckResult {
  return withDoseRateInputs(item, luminescenceAgeRange(item));
}

function luminescenceAgeRange(item: CheckItem): CheckResult {
  const { deGy, deErrorGy, doseRateGyPerKa, doseRateErrorGyPerKa } = item;
  if (deGy === null || doseRateGyPerKa === null || !(deGy > 0) || !(doseRateGyPerKa > 0)) {
    return result(CHECK, "note", `No age: ${item.calibrationError ?? "De and dose rate are both needed"}.`);
  }
  const age = luminescenceAge(
    { value: deGy, error: deErrorGy ?? 0 },
    { value: doseRateGyPerKa, error: doseRateErrorGyPerKa ?? 0 },
  );
  const doseRateRel = (doseRateErrorGyPerKa ?? 0) / doseRateGyPerKa;
  const details = {
    ageKa: age.ageKa,
    errorKa: age.errorKa,
    relativeError: age.relativeError,
    doseRateRelativeError: doseRateRel,
  };
  if (doseRateRel < VALUE_LIMITS.minDoseRateRelativeError) {
    return result(
      CHECK,
      "warning",
      `The dose-rate error is ${(100 * doseRateRel).toFixed(1)} %, below the ${100 * VALUE_LIMITS.minDoseRateRelativeError} % that field samples allow.`,
      details,
      "dose_rate_uncertain",
    );
  }
  if (age.relativeError < VALUE_LIMITS.minLuminescenceRelativeError) {
    return result(
      CHECK,
      "warning",
      `The age error is ${(100 * age.relativeError).toFixed(1)} %, below the ${100 * VALUE_LIMITS.minLuminescenceRelativeError} % plausible for a luminescence age.`,
      details,
    );
  }
  if (age.relativeError > VALUE_LIMITS.maxLuminescenceRelativeError) {
    return result(
      CHECK,
      "note",
      `The age error is ${(100 * age.relativeError).toFixed(0)} % of the age: the date constrains little.`,
      details,
    );
  }
  return result(
    CHECK,
    "pass",
    `${age.ageKa.toFixed(2)} ± ${age.errorKa.toFixed(2)} ka (${(100 * age.relativeError).toFixed(1)} %) is a plausible luminescence age.`,
    details,
  );
}

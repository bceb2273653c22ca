// The row checks that ask the science: a luminescence row's dose-rate inputs (their errors, what
// a fine-grain or feldspar sample needs, the dose rate they give) and a radiocarbon row's offsets,
// limits near background and hemisphere. Client-safe, so the form, uploads and the API share them.

import { doseRateFieldIssues, doseRateFromFields, hasConcentrations } from "#app/science/dose-rate-fields.ts";
import { isNearBackground, limitAgeFromF14c } from "#app/science/radiocarbon.ts";
import { hemisphereWarning } from "#app/science/reservoir.ts";
import { groupThousands } from "#app/science/calendar.ts";
import type { RowState } from "#app/utils/determination-input/check-row.ts";
import { rowDoseRateFields } from "#app/utils/determination-input/dose-rate-row.ts";
import type { DeterminationRow } from "#app/utils/determination-input/row.ts";
import { curveWords } from "#app/utils/labels.ts";

/** Each dose-rate error column and the value it belongs to. */
export const DOSE_RATE_ERROR_COLUMNS = [
  ["k_error_percent", "k_percent"],
  ["u_error_ppm", "u_ppm"],
  ["th_error_ppm", "th_ppm"],
  ["rb_error_ppm", "rb_ppm"],
  ["water_content_error", "water_content"],
  ["a_value_error", "a_value"],
  ["internal_k_error_percent", "internal_k_percent"],
  ["internal_rb_error_ppm", "internal_rb_ppm"],
  ["burial_depth_error_m", "burial_depth_m"],
  ["density_error_g_cm3", "density_g_cm3"],
  ["lab_cosmic_error_gy_per_ka", "lab_cosmic_gy_per_ka"],
] as const;

/** Every column the computed dose rate reads; a problem in any of them stops the computation. */
const DOSE_RATE_COLUMNS = [
  ...DOSE_RATE_ERROR_COLUMNS.flat(),
  "signal",
  "mineral",
  "grain_size_um",
  "grain_use",
  "etch_depth_um",
  "latitude",
  "longitude",
  "elevation_m",
  "dose_rate_gy_per_ka",
];

const NON_NEGATIVE = ["rb_ppm", "etch_depth_um", "internal_k_percent", "internal_rb_ppm", "lab_cosmic_gy_per_ka"] as const;

/** The science names its inputs; the row names its columns. */
const SCIENCE_FIELD_COLUMN: Record<string, string> = {
  k: "k_percent",
  u: "u_ppm",
  th: "th_ppm",
  rb: "rb_ppm",
  water: "water_content",
  grain_size: "grain_size_um",
  a_value: "a_value",
  internal_k: "internal_k_percent",
  internal_rb: "internal_rb_ppm",
  burial_depth: "burial_depth_m",
  burial_depth_m: "burial_depth_m",
  density: "density_g_cm3",
  cosmic: "lab_cosmic_gy_per_ka",
};

/**
 * A luminescence row's dose-rate inputs: each error with its value and never negative; then,
 * when the registry computes the dose rate, what the sample needs (an a-value for fine grains is
 * a problem, since there is no alpha dose without it) and what is assumed (warnings at the field).
 */
export function checkDoseRateInputs(row: RowState) {
  for (const [error, value] of DOSE_RATE_ERROR_COLUMNS) {
    const e = row.num(error);
    if (e === undefined) continue;
    if (e < 0) row.add(error, `${error} cannot be negative.`);
    else if (!row.has(value) && !row.bad(value)) row.add(error, `${error} is given without ${value}; give both or neither.`);
  }
  for (const name of NON_NEGATIVE) {
    const v = row.num(name);
    if (v !== undefined && v < 0) row.add(name, `${name} cannot be negative.`);
  }
  const a = row.num("a_value");
  if (a !== undefined && !(a > 0 && a <= 1))
    row.add("a_value", `a_value ${a} is not an alpha efficiency (between 0 and 1, typically 0.04–0.1).`);
  const we = row.num("water_content_error");
  if (we !== undefined && we > 1) {
    row.add(
      "water_content_error",
      `water_content_error ${we} is above 1: give it as a fraction (${we} percentage points is ${we / 100}).`,
    );
  }
  if (row.has("dose_rate_gy_per_ka")) return;
  const fields = rowDoseRateFields(row.out as Partial<DeterminationRow>);
  if (!hasConcentrations(fields) || DOSE_RATE_COLUMNS.some((c) => row.bad(c))) return;
  const computed = doseRateFromFields(fields);
  if (computed && !computed.ok) {
    const column = SCIENCE_FIELD_COLUMN[computed.field] ?? computed.field;
    row.add(column, `${computed.message} (or give the lab's dose_rate_gy_per_ka).`);
  }
  for (const issue of doseRateFieldIssues(fields)) {
    if (!row.bad(issue.field)) row.warn(issue.field, issue.message);
  }
}

/**
 * A radiocarbon row's offsets and edges: the freshwater offset with its error and only on an
 * atmospheric curve; the 0 ‰ flag only on a normalised age; F14C at or below zero a limit when
 * within 2σ of zero; a site calibrated on the other hemisphere's curve.
 */
export function checkOffsets(row: RowState) {
  const { out } = row;
  const hasOffset = row.has("freshwater_offset");
  if (hasOffset !== row.has("freshwater_offset_error") && !row.bad("freshwater_offset") && !row.bad("freshwater_offset_error")) {
    row.add(hasOffset ? "freshwater_offset_error" : "freshwater_offset", "Give the freshwater offset together with its error.");
  }
  const offsetError = row.num("freshwater_offset_error");
  if (offsetError !== undefined && !(offsetError > 0)) {
    row.add("freshwater_offset_error", `freshwater_offset_error must be greater than zero (got ${offsetError}).`);
  }
  const curve = typeof out.curve === "string" ? out.curve : undefined;
  const marineCurves = new Set(
    (row.ctx.marineCurves ?? row.ctx.curves.filter((c) => c.toLowerCase().includes("marine"))).map((c) => c.toLowerCase()),
  );
  if (hasOffset && curve && marineCurves.has(curve)) {
    row.warn(
      "freshwater_offset",
      `A freshwater offset applies on an atmospheric curve; ${curveWords(curve)} uses ΔR and ignores it.`,
    );
  }
  if (out.normalised_to_zero_permil === true && out.age_normalised === false) {
    row.add(
      "normalised_to_zero_permil",
      "An age normalised to 0 ‰ is a normalised age: set age_normalised to yes, or leave normalised_to_zero_permil empty.",
    );
  }
  checkNearBackground(row);
  const lat = row.num("latitude");
  if (curve && !marineCurves.has(curve) && !row.bad("latitude")) {
    const warning = hemisphereWarning(lat, curve, curveWords(curve));
    if (warning) row.warn("curve", warning);
  }
}

/** F14C near background: within 2σ of zero (even slightly negative, as blank correction leaves it) it is a limit. */
function checkNearBackground(row: RowState) {
  const f = row.num("f14c");
  const sf = row.num("f14c_error");
  if (f === undefined || row.bad("f14c")) return;
  if (sf === undefined || !(sf > 0)) {
    if (!(f > 0) && !row.bad("f14c_error") && sf !== undefined)
      row.add("f14c", `f14c ${f} needs an error above zero to be read as a limit.`);
    return;
  }
  if (!(f + 2 * sf > 0)) {
    row.add("f14c", `f14c ${f} is below zero by more than twice its error (${sf}); check the value and its error.`);
    return;
  }
  if (isNearBackground(f, sf) && row.out.greater_than !== true) {
    const limit = groupThousands(Math.round(limitAgeFromF14c(f, sf)));
    row.warn(
      "f14c",
      `F¹⁴C ${f} ± ${sf} is within 2σ of zero: stored as a limit, greater than ${limit} ¹⁴C yr BP (from F¹⁴C + 2σ), and not calibrated.`,
    );
  }
}

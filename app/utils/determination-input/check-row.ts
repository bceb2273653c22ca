import {
  type Read,
  listWords,
  readChoice,
  readIdentifier,
  readInteger,
  readNumber,
  readText,
  readYesNo,
  truncate,
} from "#app/utils/determination-input/cells.ts";
import { COLUMNS, EXAMPLE_DOI, EXAMPLE_LAB_CODES } from "#app/utils/determination-input/columns.ts";
import type { DeterminationRow, Region, RowContext, RowIssue } from "#app/utils/determination-input/row.ts";
import { nearest } from "#app/utils/nearest.ts";
import { checkDoseRateInputs, checkOffsets } from "#app/utils/determination-input/check-science.ts";
import { checkPublication } from "#app/utils/determination-input/check-citation.ts";

function inRegion(region: Region, lat: number, lon: number): boolean {
  return lat >= region.south && lat <= region.north && lon >= region.west && lon <= region.east;
}

export type RowCheck =
  | { ok: true; value: DeterminationRow; issues: []; warnings: RowIssue[] }
  /** `partial`: the columns that passed, so callers can still check what needs them (site, sample, lab). */
  | { ok: false; issues: RowIssue[]; warnings: RowIssue[]; partial: Partial<DeterminationRow> };

/** Columns that describe only one method's measurement. */
export const RADIOCARBON_ONLY_COLUMNS = [
  "c14_age",
  "c14_error",
  "f14c",
  "f14c_error",
  "d13c",
  "pretreatment",
  "curve",
  "delta_r",
  "delta_r_error",
  "delta_r_curve",
  "freshwater_offset",
  "freshwater_offset_error",
] as const;
export const LUMINESCENCE_ONLY_COLUMNS = [
  "signal",
  "mineral",
  "de_gy",
  "de_error_gy",
  "dose_rate_gy_per_ka",
  "dose_rate_error_gy_per_ka",
  "k_percent",
  "u_ppm",
  "th_ppm",
  "water_content",
  "grain_size_um",
  "burial_depth_m",
  "density_g_cm3",
  "k_error_percent",
  "u_error_ppm",
  "th_error_ppm",
  "rb_ppm",
  "rb_error_ppm",
  "water_content_error",
  "grain_use",
  "etch_depth_um",
  "a_value",
  "a_value_error",
  "internal_k_percent",
  "internal_k_error_percent",
  "internal_rb_ppm",
  "internal_rb_error_ppm",
  "burial_depth_error_m",
  "density_error_g_cm3",
  "lab_cosmic_gy_per_ka",
  "lab_cosmic_error_gy_per_ka",
  "measurement_year",
  "aliquots",
  "age_model",
] as const;

const TEXT_MAX: Record<string, number> = { notes: 2000, context: 1000, pub_authors: 1000, pub_title: 500, pub_journal: 300 };

/** Text columns that identify something: read with the invisible-character check and normalised. */
export const IDENTIFIER_COLUMNS: ReadonlySet<string> = new Set(["site_name", "sample_code", "lab_code", "lab_name"]);

/** One row being checked: the values read so far and every problem found, each at its column. */
export class RowState {
  readonly issues: RowIssue[] = [];
  readonly warnings: RowIssue[] = [];
  readonly out: Record<string, unknown> = {};
  constructor(readonly ctx: RowContext) {}
  add(column: string, message: string) {
    this.issues.push({ column, message });
  }
  warn(column: string, message: string) {
    this.warnings.push({ column, message });
  }
  has(name: string) {
    return this.out[name] !== undefined;
  }
  bad(name: string) {
    return this.issues.some((i) => i.column === name);
  }
  num(name: string) {
    return this.out[name] as number | undefined;
  }
  text(name: string) {
    return typeof this.out[name] === "string" ? (this.out[name] as string) : undefined;
  }
  need(name: string, message: string) {
    if (!this.has(name) && !this.bad(name)) this.add(name, message);
  }
}

/**
 * Validates one row given as column name → cell. Every problem comes back at the column it
 * concerns, all at once, so a contributor fixes a row in one go. Warnings never block a commit.
 */
export function checkRow(raw: Record<string, unknown>, ctx: RowContext): RowCheck {
  const row = new RowState(ctx);
  readCells(row, raw);
  checkRequired(row);
  checkCoordinates(row);
  checkMaterial(row);
  checkRanges(row);
  const method = row.out.method as DeterminationRow["method"] | undefined;
  if (method === "radiocarbon") {
    checkRadiocarbon(row);
    checkCurve(row);
    checkOffsets(row);
  } else if (method === "luminescence") {
    checkLuminescence(row);
    checkDoseRateInputs(row);
  }
  checkOtherMethodColumns(row, method);
  checkDuplicate(row);
  checkExampleRow(row);

  const { issues, warnings, out } = row;
  if (out.age_normalised === undefined) out.age_normalised = true;
  if (out.greater_than === undefined) out.greater_than = false;
  if (out.normalised_to_zero_permil === undefined) out.normalised_to_zero_permil = false;
  // The calendar age needs only the measurement: asked whenever those columns are sound, so a
  // problem elsewhere in the row never hides an age beyond the curve.
  if (ctx.calendarProblem && method && !issues.some((i) => MEASUREMENT_COLUMNS.has(i.column))) {
    const problem = ctx.calendarProblem(out as DeterminationRow);
    if (problem) issues.push(problem);
  }
  if (issues.length > 0) return { ok: false, issues, warnings, partial: out as Partial<DeterminationRow> };
  return { ok: true, value: out as DeterminationRow, issues: [], warnings };
}

const MEASUREMENT_COLUMNS = new Set<string>([
  "method",
  "material",
  "age_normalised",
  "greater_than",
  "normalised_to_zero_permil",
  ...RADIOCARBON_ONLY_COLUMNS,
  ...LUMINESCENCE_ONLY_COLUMNS,
]);

function readCells(row: RowState, raw: Record<string, unknown>) {
  for (const spec of COLUMNS) {
    const cell = raw[spec.name];
    let r: Read<unknown>;
    switch (spec.kind) {
      case "number":
        r = readNumber(cell, spec);
        break;
      case "integer":
        r = readInteger(cell, spec);
        break;
      case "yesno":
        r = readYesNo(cell, spec);
        break;
      case "choice":
        r = readChoice(cell, spec, spec.choices ?? []);
        break;
      default:
        r = IDENTIFIER_COLUMNS.has(spec.name) ? readIdentifier(cell, spec) : readText(cell, spec, TEXT_MAX[spec.name] ?? 200);
    }
    if (r.issue) row.add(spec.name, r.issue);
    else if (r.value !== undefined) row.out[spec.name] = r.value;
  }
}

function checkRequired(row: RowState) {
  row.need("site_name", "Give the site name.");
  row.need("sample_code", "Give the sample code.");
  row.need("lab_code", "Give the lab code.");
  row.need("method", "Give the method: radiocarbon or luminescence.");
  row.need("constraint_kind", "Give the constraint kind: minimum, maximum or direct.");
  row.need("material", "Give the material.");
  row.need("latitude", "Give the latitude in decimal degrees.");
  row.need("longitude", "Give the longitude in decimal degrees.");
}

/** Coordinates: range first, then (where a region of interest is configured) the swapped-columns hint. */
function checkCoordinates(row: RowState) {
  const lat = row.num("latitude");
  const lon = row.num("longitude");
  const region = row.ctx.regionOfInterest;
  if (lat !== undefined && lon !== undefined && region && !inRegion(region, lat, lon) && inRegion(region, lon, lat)) {
    row.add(
      "latitude",
      `Latitude and longitude look swapped: ${lat}, ${lon} would put the site at ${describe(lat, lon)}; swapped, it lies at ${describe(lon, lat)}. Put the latitude in the latitude column.`,
    );
    return;
  }
  if (lat !== undefined && (lat < -90 || lat > 90)) {
    row.add(
      "latitude",
      `Latitude ${lat} is outside −90 to 90.${lon !== undefined && lon >= -90 && lon <= 90 && Math.abs(lat) <= 180 ? " Are latitude and longitude swapped?" : ""}`,
    );
  }
  if (lon !== undefined && (lon < -180 || lon > 180)) row.add("longitude", `Longitude ${lon} is outside −180 to 180.`);
}

/** Material from the controlled list, matched without regard to case, and dated by the row's method. */
function checkMaterial(row: RowState) {
  const { ctx, out } = row;
  const given = row.text("material");
  if (given === undefined) return;
  const m = ctx.materials.find((x) => x.toLowerCase() === given.toLowerCase());
  if (!m) {
    const near = nearest(given, ctx.materials);
    row.add("material", `"${truncate(given)}" is not in the list of materials${near ? `; did you mean "${near}"?` : "."}`);
    delete out.material;
    return;
  }
  out.material = m;
  const method = out.method as DeterminationRow["method"] | undefined;
  const methods = method && ctx.materialMethods ? ctx.materialMethods[m.toLowerCase()] : undefined;
  if (method && methods && !methods.includes(method)) {
    row.add("material", `${m} is dated by ${listWords(methods)}, not ${method}.`);
  }
}

function checkRanges(row: RowState) {
  for (const name of ["depth_cm", "burial_depth_m", "grain_size_um", "k_percent", "u_ppm", "th_ppm", "water_content"]) {
    const v = row.num(name);
    if (v !== undefined && v < 0) row.add(name, `${name} cannot be negative.`);
  }
  for (const name of ["density_g_cm3", "aliquots", "strat_order"]) {
    const v = row.num(name);
    if (v !== undefined && v <= 0) row.add(name, `${name} must be greater than zero.`);
  }
  for (const name of ["c14_error", "f14c_error", "delta_r_error", "de_error_gy", "dose_rate_error_gy_per_ka"]) {
    const v = row.num(name);
    if (v !== undefined && !(v > 0)) row.add(name, `${name} must be greater than zero (got ${v}).`);
  }
  const water = row.num("water_content");
  if (water !== undefined && water > 1 && !row.bad("water_content")) {
    row.add(
      "water_content",
      `Water content ${water} is above 1: give it as a fraction of dry mass (${water} % is ${water / 100}).`,
    );
  }
  const year = row.num("measurement_year");
  const thisYear = row.ctx.currentYear ?? new Date().getFullYear();
  if (year !== undefined && (year < 1950 || year > thisYear)) {
    row.add("measurement_year", `Year of measurement ${year} is not between 1950 and ${thisYear}.`);
  }
  checkPublication(row);
}

function checkRadiocarbon(row: RowState) {
  const hasAge = row.has("c14_age") || row.has("c14_error");
  const hasF = row.has("f14c") || row.has("f14c_error");
  if (!hasAge && !hasF && !row.bad("c14_age") && !row.bad("f14c")) {
    row.add("c14_age", "A radiocarbon row needs c14_age and c14_error (or f14c and f14c_error).");
  } else if (hasAge || !hasF) {
    row.need("c14_age", "Give c14_age with its c14_error.");
    row.need("c14_error", "Give the error of c14_age (one standard deviation, in ¹⁴C years).");
  } else {
    row.need("f14c", "Give f14c with its f14c_error.");
    row.need("f14c_error", "Give the error of f14c (one standard deviation).");
  }
  const f = row.num("f14c");
  // F at or below zero is refused only when it is below zero by more than 2σ (check-science.ts).
  if (f !== undefined && f > 2 && !row.bad("f14c"))
    row.add("f14c", `f14c ${f} is a fraction near 1 or below; is it given in pMC? (${f} pMC is ${f / 100}).`);
  const d13 = row.num("d13c");
  if (d13 !== undefined && (d13 < -60 || d13 > 20)) row.add("d13c", `δ¹³C ${d13} ‰ is outside the plausible range −60 to 20 ‰.`);
  if (row.out.age_normalised === false && d13 === undefined && !row.bad("d13c")) {
    row.add("d13c", "An age that is not δ¹³C-normalised needs d13c.");
  }
}

/** Curve: a known short name; marine material needs a marine curve; ΔR only with its error and a marine curve. */
function checkCurve(row: RowState) {
  const { ctx, out } = row;
  const marineMaterials = new Set((ctx.marineMaterials ?? []).map((m) => m.toLowerCase()));
  const marineCurves = new Set(
    (ctx.marineCurves ?? ctx.curves.filter((c) => c.toLowerCase().includes("marine"))).map((c) => c.toLowerCase()),
  );
  const material = row.text("material");
  const isMarine = material !== undefined && marineMaterials.has(material.toLowerCase());
  const given = row.text("curve");
  if (given !== undefined) {
    const c = ctx.curves.find((x) => x.toLowerCase() === given.toLowerCase());
    if (c) out.curve = c.toLowerCase();
    else {
      const near = nearest(given, ctx.curves);
      row.add(
        "curve",
        `No curve named "${truncate(given)}"${near ? `; did you mean ${near}?` : `; use ${listWords(ctx.curves)}.`}`,
      );
      delete out.curve;
    }
  } else if (!row.bad("curve")) {
    out.curve = isMarine ? undefined : "intcal20";
  }
  if (isMarine && !row.bad("curve") && !marineCurves.has(String(out.curve ?? ""))) {
    const marineNames = [...marineCurves];
    row.add(
      "curve",
      `${material} is marine: use ${listWords(marineNames.length ? marineNames : ["marine20"])}${out.curve ? ` rather than ${out.curve}` : ""}.`,
    );
  }
  const onMarineCurve = typeof out.curve === "string" && marineCurves.has(out.curve as string);
  if (row.has("delta_r") !== row.has("delta_r_error") && !row.bad("delta_r") && !row.bad("delta_r_error")) {
    row.add(row.has("delta_r") ? "delta_r_error" : "delta_r", "Give ΔR together with its error.");
  }
  if (onMarineCurve && !row.has("delta_r") && !row.bad("delta_r")) {
    row.warn("delta_r", "No ΔR given for a marine sample: calibrated with ΔR 0 ± 0, which is rarely right.");
  }
  if (row.has("delta_r") && !row.has("delta_r_curve")) {
    row.warn("delta_r_curve", "ΔR given without the curve it was derived against.");
  }
  if (row.has("delta_r") && !onMarineCurve && typeof out.curve === "string") {
    row.warn("delta_r", `ΔR is only applied on a marine curve; ${out.curve} ignores it.`);
  }
}

function checkLuminescence(row: RowState) {
  row.need("de_gy", "A luminescence row needs de_gy (equivalent dose, Gy).");
  row.need("de_error_gy", "Give the error of de_gy (one standard deviation, in Gy).");
  const de = row.num("de_gy");
  if (de !== undefined && !(de > 0)) row.add("de_gy", `de_gy must be greater than zero (got ${de}).`);
  const hasRate = row.has("dose_rate_gy_per_ka") || row.has("dose_rate_error_gy_per_ka");
  // Density may be left out (assumed, with a warning); burial depth too when the lab gives its cosmic dose rate.
  const parts = ["k_percent", "u_ppm", "th_ppm", "water_content", "burial_depth_m"].filter(
    (p) => p !== "burial_depth_m" || !row.has("lab_cosmic_gy_per_ka"),
  );
  if (hasRate || !parts.some((p) => row.has(p))) {
    if (!hasRate && !parts.some((p) => row.bad(p))) {
      row.add(
        "dose_rate_gy_per_ka",
        "Give dose_rate_gy_per_ka with its error, or K, U, Th, water content, burial depth and density (with their errors) to compute it.",
      );
    } else {
      row.need("dose_rate_gy_per_ka", "Give dose_rate_gy_per_ka with its error.");
      row.need("dose_rate_error_gy_per_ka", "Give the error of the dose rate (one standard deviation, in Gy/ka).");
    }
    const rate = row.num("dose_rate_gy_per_ka");
    if (rate !== undefined && !(rate > 0))
      row.add("dose_rate_gy_per_ka", `dose_rate_gy_per_ka must be greater than zero (got ${rate}).`);
  } else {
    for (const p of parts) row.need(p, `To compute the dose rate, give ${p} too (or give dose_rate_gy_per_ka with its error).`);
  }
  row.need("measurement_year", "A luminescence row needs the year of measurement.");
}

/**
 * Values that belong to the other method are not part of this determination: say so, and they
 * are not stored (the form never sends them; a spreadsheet row may carry them by accident).
 */
function checkOtherMethodColumns(row: RowState, method: DeterminationRow["method"] | undefined) {
  if (method !== "radiocarbon" && method !== "luminescence") return;
  const other = method === "radiocarbon" ? LUMINESCENCE_ONLY_COLUMNS : RADIOCARBON_ONLY_COLUMNS;
  const given = other.filter((column) => row.has(column));
  // One caution for the row, naming every such column, rather than a line per column.
  if (given.length === 1) row.warn(given[0]!, `${given[0]} is not used for a ${method} row and is not stored.`);
  else if (given.length > 1) {
    row.warn(given[0]!, `${given.length} columns are not used for a ${method} row and are not stored: ${given.join(", ")}.`);
  }
}

/** Duplicates against the registry; duplicates within a file are the caller's (it sees every row). */
function checkDuplicate(row: RowState) {
  const code = row.text("lab_code");
  const existing = code !== undefined && row.ctx.labCodeInRegistry ? row.ctx.labCodeInRegistry(code) : null;
  if (existing != null) row.add("lab_code", `Lab code ${code} is already in the registry: /determinations/${existing}`);
}

/** The template's example rows are refused, so a file uploaded with them left in stores nothing invented. */
function checkExampleRow(row: RowState) {
  const code = row.text("lab_code");
  if (code !== undefined && EXAMPLE_LAB_CODES.some((c) => c.toLowerCase() === code.toLowerCase())) {
    row.add("lab_code", `${code} is the template's example row: replace it with your own measurement, or delete the row.`);
  }
  if (typeof row.out.doi === "string" && row.out.doi.toLowerCase() === EXAMPLE_DOI) {
    row.add("doi", `${EXAMPLE_DOI} is the template's example DOI: give your publication's DOI, or leave the cell empty.`);
  }
}

function describe(lat: number, lon: number): string {
  const ns = lat >= 0 ? "N" : "S";
  const ew = lon >= 0 ? "E" : "W";
  return `${Math.abs(lat)}° ${ns}, ${Math.abs(lon)}° ${ew}`;
}

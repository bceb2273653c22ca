// The form's live calendar-age preview.

import { eq } from "drizzle-orm";
import type { Db } from "#app/db/client.server.ts";
import { sites } from "#app/db/schema.ts";
import { calendarOutcome, interpretMeasurement } from "#app/models/calibration/calibrations.server.ts";
import { activeCurve, type CurveRow } from "#app/models/calibration/curves.server.ts";
import { measurementFields, rowDoseRate } from "#app/models/submission/determinations.server.ts";
import { luminescenceAge } from "#app/science/luminescence.ts";
import { checkRow } from "#app/utils/determination-input/check-row.ts";
import { isBlankCell } from "#app/utils/determination-input/cells.ts";
import { clientRowContext, PREVIEW_COLUMNS, type FormOptions, type PreviewResult } from "#app/utils/submission-form.ts";

/**
 * The calendar age the form would give, without writing anything: the same row rules and the
 * same calendarOutcome the registry stores. Only the measurement's own fields matter here, so
 * the rest of the row is filled with placeholders.
 */
export function previewCalendarAge(
  db: Db,
  raw: Record<string, unknown>,
  options: Pick<FormOptions, "materials" | "curves">,
): PreviewResult {
  const method = typeof raw.method === "string" ? raw.method.trim().toLowerCase() : "";
  if (method !== "radiocarbon" && method !== "luminescence") {
    return { state: "empty", message: "Choose the method to see the calendar age." };
  }
  if (method === "radiocarbon" && isBlankCell(raw.c14_age) && isBlankCell(raw.f14c)) {
    return { state: "empty", message: "Type the ¹⁴C age (or F14C) and its error to see the calendar age." };
  }
  if (method === "luminescence" && isBlankCell(raw.de_gy)) {
    return { state: "empty", message: "Type De, the dose rate and the year of measurement to see the age." };
  }
  const measured: Record<string, unknown> = {};
  for (const c of PREVIEW_COLUMNS) measured[c] = raw[c];
  if (isBlankCell(measured.material)) {
    measured.material = options.materials.find((m) => m.methods.includes(method) && !m.marine)?.name;
  }
  const place = previewPlace(db, raw);
  const filled = {
    site_name: "preview",
    sample_code: "preview",
    lab_code: "preview",
    constraint_kind: "minimum",
    ...measured,
    ...place,
  };
  const check = checkRow(filled, clientRowContext(options));
  // Cautions about the site's position only count when the form gave one.
  const warnings = check.warnings.filter((w) => place.known || w.column !== "curve" || !/hemisphere/.test(w.message));
  if (!check.ok) {
    const first = check.issues[0]!;
    return { state: "incomplete", column: first.column, message: first.message, warnings };
  }
  const row = check.value;
  const fields = measurementFields(row);
  const curveFor = (name: string): CurveRow | undefined => activeCurve(db, name);
  if (row.method === "radiocarbon") {
    const interpreted = interpretMeasurement(fields);
    if (interpreted.kind !== "age")
      return { state: "no-age", message: interpreted.message, label: fields.curveName ?? "", warnings };
  }
  const outcome = calendarOutcome(db, fields, curveFor);
  if (!outcome.ok) return { state: "no-age", message: outcome.error, label: outcome.label, warnings };
  const result: PreviewResult = {
    warnings,
    state: "ok",
    label: outcome.label,
    medianCalBp: outcome.summary.medianCalBp,
    hpd68: outcome.summary.hpd68.map((r) => ({ from: r.from, to: r.to, p: r.p })),
    hpd95: outcome.summary.hpd95.map((r) => ({ from: r.from, to: r.to, p: r.p })),
  };
  if (row.method === "luminescence") {
    const rate = rowDoseRate(row)!;
    const age = luminescenceAge({ value: row.de_gy!, error: row.de_error_gy ?? 0 }, { value: rate.value, error: rate.error });
    result.luminescence = {
      ageKa: age.ageKa,
      errorKa: age.errorKa,
      doseRate: rate.value,
      doseRateError: rate.error,
      computed: rate.computed,
    };
  }
  return result;
}

/**
 * Where the sample lies, for the cosmic dose rate and the hemisphere check: the chosen site's
 * position from the registry, the new site's as typed, else a placeholder (`known` false).
 */
function previewPlace(db: Db, raw: Record<string, unknown>) {
  if (raw.site_choice === "existing") {
    const id = Number(raw.site_id);
    const site = Number.isSafeInteger(id) && id > 0 ? db.select().from(sites).where(eq(sites.id, id)).get() : undefined;
    if (site)
      return { latitude: site.latitude, longitude: site.longitude, elevation_m: site.elevationM ?? undefined, known: true };
  } else {
    const lat = Number(raw.latitude);
    const lon = Number(raw.longitude);
    if (!isBlankCell(raw.latitude) && !isBlankCell(raw.longitude) && Number.isFinite(lat) && Number.isFinite(lon)) {
      const elevation = Number(raw.elevation_m);
      return {
        latitude: lat,
        longitude: lon,
        elevation_m: isBlankCell(raw.elevation_m) || !Number.isFinite(elevation) ? undefined : elevation,
        known: true,
      };
    }
  }
  return { latitude: 58, longitude: -64, elevation_m: undefined, known: false };
}

// Low-level inserts for labs, publications, sites, samples and determinations, shared by the
// seed, the test factories and the submission workflows, and the one mapping from a validated
// row (form, spreadsheet, API) to a determination's columns. A determination is always written
// together with its audit row, in one transaction.

import { getTableColumns, getTableName, type Column } from "drizzle-orm";
import type { SQLiteTable } from "drizzle-orm/sqlite-core";
import type { Db } from "#app/db/client.server.ts";
import { prepared } from "#app/db/prepared.server.ts";
import { auditLog, determinations, labs, publications, samples, sites, type Method } from "#app/db/schema.ts";
import type { MeasurementFields } from "#app/models/calibration/calibrations.server.ts";
import { doseRateFromFields } from "#app/science/dose-rate-fields.ts";
import { DEFAULT_CONVERSION_FACTORS } from "#app/science/luminescence.ts";
import { interpretRadiocarbon } from "#app/science/radiocarbon.ts";
import { rowDoseRateFields } from "#app/utils/determination-input/dose-rate-row.ts";
import type { DeterminationRow as ValidatedRow } from "#app/utils/determination-input/row.ts";

export type NewLab = typeof labs.$inferInsert;
export type LabRow = typeof labs.$inferSelect;
export type NewPublication = typeof publications.$inferInsert;
export type PublicationRow = typeof publications.$inferSelect;
export type NewSite = typeof sites.$inferInsert;
export type SiteRow = typeof sites.$inferSelect;
export type NewSample = typeof samples.$inferInsert;
export type SampleRow = typeof samples.$inferSelect;
export type NewDetermination = typeof determinations.$inferInsert;
export type DeterminationRow = typeof determinations.$inferSelect;

export function insertLab(db: Db, values: NewLab): LabRow {
  return insertRow(db, labs, values);
}

export function insertPublication(db: Db, values: NewPublication): PublicationRow {
  return insertRow(db, publications, values);
}

export function insertSite(db: Db, values: NewSite): SiteRow {
  return insertRow(db, sites, values);
}

export function insertSample(db: Db, values: NewSample): SampleRow {
  return insertRow(db, samples, values);
}

/** A new site's columns from a validated row. */
export function siteValues(row: ValidatedRow, createdBy: number): NewSite {
  return {
    name: row.site_name,
    latitude: row.latitude,
    longitude: row.longitude,
    elevationM: row.elevation_m ?? null,
    setting: row.setting ?? null,
    createdBy,
  };
}

/** A sample's own columns from a validated row (the site it hangs on is the caller's). */
export function sampleValues(row: ValidatedRow) {
  return {
    fieldCode: row.sample_code,
    material: row.material,
    depthCm: row.depth_cm ?? null,
    stratUnit: row.strat_unit ?? null,
    stratOrder: row.strat_order ?? null,
    context: row.context ?? null,
  } satisfies Partial<NewSample>;
}

/**
 * The dose rate a luminescence row is calibrated with: given, or computed from K, U, Th and
 * water with every term and every error (defaults assumed where the lab gave none).
 */
export function rowDoseRate(row: ValidatedRow): { value: number; error: number; computed: boolean } | null {
  if (row.dose_rate_gy_per_ka != null) {
    return { value: row.dose_rate_gy_per_ka, error: row.dose_rate_error_gy_per_ka ?? 0, computed: false };
  }
  const r = doseRateFromFields(rowDoseRateFields(row));
  if (!r?.ok) return null;
  return { value: r.result.total, error: r.result.totalError, computed: true };
}

/**
 * A measurement given as F14C within 2σ of zero (blank-corrected values may be slightly
 * negative) is a limit, as the science reads it: it is stored as one, not as an age.
 */
function nearBackground(row: ValidatedRow): boolean {
  if (row.c14_age != null || row.f14c == null || row.f14c_error == null) return false;
  const r = interpretRadiocarbon({
    measurement: { f14c: row.f14c, error: row.f14c_error },
    d13c: row.d13c,
    alreadyNormalised: row.age_normalised,
    normalisedToZeroPermil: row.normalised_to_zero_permil,
  });
  return r.kind === "limit";
}

/**
 * The determination's own columns from a validated row. Fields of the other method are
 * dropped (the row check warns about them), so a value left in a luminescence row's c14_age
 * column is never stored as part of that determination.
 */
export function determinationValues(row: ValidatedRow) {
  const c14 = row.method === "radiocarbon";
  const lum = row.method === "luminescence";
  const rate = lum ? rowDoseRate(row) : null;
  const onlyC14 = <T>(v: T | undefined) => (c14 ? (v ?? null) : null);
  const onlyLum = <T>(v: T | undefined) => (lum ? (v ?? null) : null);
  return {
    labCode: row.lab_code,
    method: row.method as Method,
    constraintKind: row.constraint_kind,
    c14AgeYr: onlyC14(row.c14_age),
    c14ErrorYr: onlyC14(row.c14_error),
    f14c: onlyC14(row.f14c),
    f14cError: onlyC14(row.f14c_error),
    d13cPermil: onlyC14(row.d13c),
    ageNormalised: c14 ? row.age_normalised : true,
    isLimit: c14 ? row.greater_than || nearBackground(row) : false,
    pretreatment: onlyC14(row.pretreatment),
    curveName: c14 ? (row.curve ?? "intcal20") : null,
    deltaRYr: onlyC14(row.delta_r),
    deltaRErrorYr: onlyC14(row.delta_r_error),
    deltaRCurve: onlyC14(row.delta_r_curve),
    freshwaterOffsetYr: onlyC14(row.freshwater_offset),
    freshwaterOffsetErrorYr: onlyC14(row.freshwater_offset_error),
    normalisedToZeroPermil: c14 ? row.normalised_to_zero_permil : false,
    signal: onlyLum(row.signal),
    mineral: onlyLum(row.mineral),
    deGy: onlyLum(row.de_gy),
    deErrorGy: onlyLum(row.de_error_gy),
    doseRateGyPerKa: rate?.value ?? null,
    doseRateErrorGyPerKa: rate?.error ?? null,
    doseRateComputed: rate?.computed ?? false,
    kPercent: onlyLum(row.k_percent),
    kErrorPercent: onlyLum(row.k_error_percent),
    uPpm: onlyLum(row.u_ppm),
    uErrorPpm: onlyLum(row.u_error_ppm),
    thPpm: onlyLum(row.th_ppm),
    thErrorPpm: onlyLum(row.th_error_ppm),
    rbPpm: onlyLum(row.rb_ppm),
    rbErrorPpm: onlyLum(row.rb_error_ppm),
    waterContentFraction: onlyLum(row.water_content),
    waterContentError: onlyLum(row.water_content_error),
    grainSizeUm: onlyLum(row.grain_size_um),
    grainUse: onlyLum(row.grain_use),
    etchDepthUm: onlyLum(row.etch_depth_um),
    aValue: onlyLum(row.a_value),
    aValueError: onlyLum(row.a_value_error),
    internalKPercent: onlyLum(row.internal_k_percent),
    internalKErrorPercent: onlyLum(row.internal_k_error_percent),
    internalRbPpm: onlyLum(row.internal_rb_ppm),
    internalRbErrorPpm: onlyLum(row.internal_rb_error_ppm),
    burialDepthM: onlyLum(row.burial_depth_m),
    burialDepthErrorM: onlyLum(row.burial_depth_error_m),
    densityGPerCm3: onlyLum(row.density_g_cm3),
    densityErrorGPerCm3: onlyLum(row.density_error_g_cm3),
    labCosmicGyPerKa: onlyLum(row.lab_cosmic_gy_per_ka),
    labCosmicErrorGyPerKa: onlyLum(row.lab_cosmic_error_gy_per_ka),
    conversionFactors: rate?.computed ? DEFAULT_CONVERSION_FACTORS : null,
    measurementYear: onlyLum(row.measurement_year),
    aliquots: onlyLum(row.aliquots),
    ageModel: onlyLum(row.age_model),
    notes: row.notes ?? null,
  } satisfies Partial<NewDetermination>;
}

/** The columns a calendar age is computed from, as a stored (uploaded) row would hold them. */
export function measurementFields(row: ValidatedRow): MeasurementFields {
  const v = determinationValues(row);
  return {
    method: v.method,
    c14AgeYr: v.c14AgeYr,
    c14ErrorYr: v.c14ErrorYr,
    f14c: v.f14c,
    f14cError: v.f14cError,
    d13cPermil: v.d13cPermil,
    ageNormalised: v.ageNormalised,
    isLimit: v.isLimit,
    curveName: v.curveName,
    deltaRYr: v.deltaRYr,
    deltaRErrorYr: v.deltaRErrorYr,
    freshwaterOffsetYr: v.freshwaterOffsetYr,
    freshwaterOffsetErrorYr: v.freshwaterOffsetErrorYr,
    normalisedToZeroPermil: v.normalisedToZeroPermil,
    deGy: v.deGy,
    deErrorGy: v.deErrorGy,
    doseRateGyPerKa: v.doseRateGyPerKa,
    doseRateErrorGyPerKa: v.doseRateErrorGyPerKa,
    measurementYear: v.measurementYear,
  };
}

/**
 * Stores one determination and its `determination.create` audit row (after = the stored row)
 * in one transaction — a savepoint when the caller already holds one, so it can run inside the
 * caller's larger write. The audit time is the determination's creation time, so back-dated
 * demo data keeps a consistent history.
 */
export function insertDetermination(db: Db, values: NewDetermination, actorId: number | null): DeterminationRow {
  return db.$client.transaction(() => {
    const row = insertRow(db, determinations, values);
    insertRowOnly(db, auditLog, {
      at: row.createdAt,
      actorId,
      action: "determination.create",
      entity: "determination",
      entityId: String(row.id),
      before: null,
      after: auditSnapshot(row),
    });
    return row;
  })();
}

// Drizzle prepares a fresh statement for every query, which dominates the cost of bulk inserts
// (the seed writes tens of thousands of rows). These inserts keep one prepared statement per
// table and column set (db/prepared.server.ts), and convert values with the schema's own column mappings.
function insertStatement(db: Db, table: SQLiteTable, values: Record<string, unknown>, returning: boolean) {
  const columns = getTableColumns(table) as Record<string, Column>;
  const keys = Object.keys(values).filter((k) => values[k] !== undefined && k in columns);
  const text = `insert into "${getTableName(table)}" (${keys.map((k) => `"${columns[k].name}"`).join(", ")}) values (${keys
    .map(() => "?")
    .join(", ")})${returning ? " returning *" : ""}`;
  const params = keys.map((k) => (values[k] === null ? null : columns[k].mapToDriverValue(values[k])));
  return { stmt: prepared(db, text), params, columns };
}

function insertRow<T extends SQLiteTable>(db: Db, table: T, values: T["$inferInsert"]): T["$inferSelect"] {
  const { stmt, params, columns } = insertStatement(db, table, values as Record<string, unknown>, true);
  const raw = stmt.get(...params) as Record<string, unknown>;
  const row: Record<string, unknown> = {};
  for (const [key, col] of Object.entries(columns)) {
    const v = raw[col.name];
    row[key] = v === null || v === undefined ? null : col.mapFromDriverValue(v);
  }
  return row as T["$inferSelect"];
}

/** Insert without reading the row back (cheaper; for rows nobody needs returned, such as audit entries). */
function insertRowOnly<T extends SQLiteTable>(db: Db, table: T, values: T["$inferInsert"]): void {
  const { stmt, params } = insertStatement(db, table, values as Record<string, unknown>, false);
  stmt.run(...params);
}

/** The row as the audit log keeps it: plain JSON, timestamps as ISO strings. */
export function auditSnapshot(row: DeterminationRow): Record<string, unknown> {
  const out: Record<string, unknown> = {};
  for (const [key, value] of Object.entries(row)) out[key] = value instanceof Date ? value.toISOString() : value;
  return out;
}

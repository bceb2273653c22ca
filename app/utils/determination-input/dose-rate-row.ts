import type { DoseRateFields } from "#app/science/dose-rate-fields.ts";
import type { DeterminationRow } from "#app/utils/determination-input/row.ts";

/**
 * A row's dose-rate fields (template column names) as the one reading of them in
 * app/science/dose-rate-fields.ts takes them. Client-safe: the row check (form, upload, API)
 * and the stored path share it, so a warning at the field and the stored dose rate agree.
 */
export function rowDoseRateFields(row: Partial<DeterminationRow>): DoseRateFields {
  const site =
    row.latitude != null && row.longitude != null
      ? { latitude: row.latitude, longitude: row.longitude, elevationM: row.elevation_m ?? null }
      : null;
  return {
    signal: row.signal ?? null,
    mineral: row.mineral ?? null,
    kPercent: row.k_percent ?? null,
    kErrorPercent: row.k_error_percent ?? null,
    uPpm: row.u_ppm ?? null,
    uErrorPpm: row.u_error_ppm ?? null,
    thPpm: row.th_ppm ?? null,
    thErrorPpm: row.th_error_ppm ?? null,
    rbPpm: row.rb_ppm ?? null,
    rbErrorPpm: row.rb_error_ppm ?? null,
    waterContentFraction: row.water_content ?? null,
    waterContentError: row.water_content_error ?? null,
    grainSizeUm: row.grain_size_um ?? null,
    grainUse: row.grain_use ?? null,
    etchDepthUm: row.etch_depth_um ?? null,
    aValue: row.a_value ?? null,
    aValueError: row.a_value_error ?? null,
    internalKPercent: row.internal_k_percent ?? null,
    internalKErrorPercent: row.internal_k_error_percent ?? null,
    internalRbPpm: row.internal_rb_ppm ?? null,
    internalRbErrorPpm: row.internal_rb_error_ppm ?? null,
    burialDepthM: row.burial_depth_m ?? null,
    burialDepthErrorM: row.burial_depth_error_m ?? null,
    densityGPerCm3: row.density_g_cm3 ?? null,
    densityErrorGPerCm3: row.density_error_g_cm3 ?? null,
    labCosmicGyPerKa: row.lab_cosmic_gy_per_ka ?? null,
    labCosmicErrorGyPerKa: row.lab_cosmic_error_gy_per_ka ?? null,
    site,
  };
}

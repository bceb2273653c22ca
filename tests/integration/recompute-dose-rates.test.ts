import { describe, expect, it } from "vitest";
import { getDb } from "#app/db/client.server.ts";
import { calibrateDeterminations, currentCalibration } from "#app/models/calibration/calibrations.server.ts";
import { DOSE_RATE_RECOMPUTE_ACTION, recomputeDoseRates } from "#app/models/submission/recompute-dose-rates.server.ts";
import { fullDoseRate } from "#app/science/dose-rate.ts";
import { luminescenceAge, luminescenceAgeToCalBp } from "#app/science/luminescence.ts";
import { createTestDetermination, createTestSample, createTestSite } from "#tests/factories.ts";

/*
 * An existing registry: dose rates stored by the older path (the 10 % cosmic allowance only) are
 * computed again with the full model and recalibrated; a lab's own dose rate is left alone;
 * a second run changes nothing.
 */

const db = () => getDb();
const auditCount = (id: number) =>
  db()
    .$client.prepare("select count(*) from audit_log where entity = 'determination' and entity_id = ? and action = ?")
    .pluck()
    .get(String(id), DOSE_RATE_RECOMPUTE_ACTION) as number;

describe("recomputing stored dose rates with the full model (npm run setup)", () => {
  it("updates computed dose rates and their calendar ages, leaves the lab's own, and is idempotent", () => {
    const site = createTestSite(db(), { latitude: 58.4, longitude: -64.1, elevationM: 450 });
    const sample = createTestSample(db(), { siteId: site.id, material: "quartz" });
    const inputs = {
      kPercent: 1.6,
      uPpm: 1.2,
      thPpm: 4.5,
      waterContentFraction: 0.15,
      grainSizeUm: 180,
      burialDepthM: 0.6,
      densityGPerCm3: 1.8,
      conversionFactors: "guerin2011",
    };
    // Stored by the older path: 2.140 ± 0.017 Gy/ka (the cosmic allowance only).
    const legacy = createTestDetermination(db(), {
      method: "luminescence",
      sampleId: sample.id,
      ...inputs,
      deGy: 9.8,
      deErrorGy: 0.5,
      doseRateGyPerKa: 1.251,
      doseRateErrorGyPerKa: 0.02,
      doseRateComputed: true,
      measurementYear: 2022,
    });
    // The lab's own dose rate, stored with its concentrations: never recomputed.
    const labRate = createTestDetermination(db(), {
      method: "luminescence",
      sampleId: sample.id,
      ...inputs,
      doseRateGyPerKa: 2.2,
      doseRateErrorGyPerKa: 0.11,
      doseRateComputed: false,
    });
    calibrateDeterminations(db(), [legacy.id, labRate.id]);
    const medianBefore = currentCalibration(db(), legacy.id)!.medianCalBp!;

    const first = recomputeDoseRates(db());
    expect(first.changedIds).toContain(legacy.id);
    expect(first.changedIds).not.toContain(labRate.id);

    // The science on its own, the inputs written out: coarse quartz with the assumed 10 µm etch,
    // the stated defaults for the missing errors, cosmic at the site's altitude and latitude.
    const expected = fullDoseRate({
      k: { value: 1.6 },
      u: { value: 1.2 },
      th: { value: 4.5 },
      water: { value: 0.15 },
      mineral: "quartz",
      grain: { kind: "coarse", diameterUm: 180, etchUm: 10 },
      depthM: { value: 0.6 },
      density: { value: 1.8 },
      site: { latitude: 58.4, longitude: -64.1, elevationM: 450 },
      factors: "guerin2011",
    });
    const after = db().$client.prepare("select * from determinations where id = ?").get(legacy.id) as Record<string, number>;
    expect(after.dose_rate_gy_per_ka).toBeCloseTo(expected.total, 10);
    expect(after.dose_rate_error_gy_per_ka).toBeCloseTo(expected.totalError, 10);
    expect(after.dose_rate_error_gy_per_ka / after.dose_rate_gy_per_ka).toBeGreaterThan(0.04);
    expect(after.version).toBe(2);
    expect(auditCount(legacy.id)).toBe(1);
    // 0.6 m × 1.8 g/cm³ = 1.08 hg/cm², below 1.67: the shallow-burial caution stays with the result.
    expect(expected.cautions.join(" ")).toMatch(/1\.67/);

    // Its calendar age follows: De / the new dose rate, placed by the year of measurement.
    const age = luminescenceAge({ value: 9.8, error: 0.5 }, { value: expected.total, error: expected.totalError });
    const cal = luminescenceAgeToCalBp(age.ageKa, age.errorKa, 2022);
    const medianAfter = currentCalibration(db(), legacy.id)!.medianCalBp!;
    expect(Math.abs(medianAfter - cal.calBp)).toBeLessThanOrEqual(1);
    expect(medianAfter).not.toBe(medianBefore);

    const labAfter = db().$client.prepare("select * from determinations where id = ?").get(labRate.id) as Record<string, number>;
    expect(labAfter).toMatchObject({ dose_rate_gy_per_ka: 2.2, dose_rate_error_gy_per_ka: 0.11, version: 1 });

    const second = recomputeDoseRates(db());
    expect(second.changed).toBe(0);
    expect(second.examined).toBe(first.examined);
    expect(auditCount(legacy.id)).toBe(1);
    expect(db().$client.prepare("select version from determinations where id = ?").pluck().get(legacy.id) as number).toBe(2);
  });
});

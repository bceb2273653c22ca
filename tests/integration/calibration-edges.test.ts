import { describe, expect, it } from "vitest";
import { getDb } from "#app/db/client.server.ts";
import { calibrateDeterminations, currentCalibration } from "#app/models/calibration/calibrations.server.ts";
import { createTestDetermination } from "#tests/factories.ts";

const db = () => getDb();

describe("radiocarbon at the curve's ends, stored", () => {
  it("calibrates 50,250 ± 400 on IntCal20, stores that it is cut by the curve's end, and says so", () => {
    const d = createTestDetermination(db(), { c14AgeYr: 50250, c14ErrorYr: 400, curveName: "intcal20" });
    expect(calibrateDeterminations(db(), [d.id])).toEqual({ calibrated: 1, failed: 0 });
    const cal = currentCalibration(db(), d.id)!;
    expect(cal.error).toBeNull();
    expect(cal.atCurveLimit).toBe(true);
    expect(cal.hpd95![0]).toMatchObject({ from: 55000, atCurveLimit: true });
    expect(cal.notes!.join(" ")).toMatch(/old end of IntCal20 \(55,000 cal BP\)/);
  });

  it("stores an ordinary date as not cut, and refuses what cannot overlap naming the curve by name", () => {
    const ok = createTestDetermination(db(), { c14AgeYr: 9000, c14ErrorYr: 40, curveName: "intcal20" });
    const far = createTestDetermination(db(), { c14AgeYr: 58000, c14ErrorYr: 300, curveName: "intcal20" });
    calibrateDeterminations(db(), [ok.id, far.id]);
    expect(currentCalibration(db(), ok.id)).toMatchObject({ atCurveLimit: false, notes: null, error: null });
    const refused = currentCalibration(db(), far.id)!;
    expect(refused.error).toMatch(/cannot overlap it.*IntCal20 covers/);
    expect(refused.error).not.toMatch(/\b\d+ covers/);
  });
});

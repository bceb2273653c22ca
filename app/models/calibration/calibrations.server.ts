import { and, eq, inArray } from "drizzle-orm";
import { createHash } from "node:crypto";
import type { Db } from "#app/db/client.server.ts";
import { calibrations, curves, determinations, type HpdRange } from "#app/db/schema.ts";
import { calibrate, CalibrationError, type CalibrationInput } from "#app/science/calibration.ts";
import { appliedOffset } from "#app/science/reservoir.ts";
import { normalDensity, summariseDensity, type CalendarDensity, type DensitySummary } from "#app/science/density.ts";
import { luminescenceAge, luminescenceAgeToCalBp } from "#app/science/luminescence.ts";
import { interpretRadiocarbon } from "#app/science/radiocarbon.ts";
import { activeCurve, preparedCurve, type CurveRow } from "#app/models/calibration/curves.server.ts";
import type { CalibrationItem } from "#app/utils/calibrate-input.ts";

type DeterminationRow = typeof determinations.$inferSelect;

/** What a determination's calendar age is, before it is stored. */
export type CalendarOutcome =
  | {
      ok: true;
      curve: CurveRow | null;
      label: string;
      summary: DensitySummary;
      density: CalendarDensity;
      /** Cut by the curve's end (radiocarbon only), with the calibration's notes. */
      atCurveLimit?: boolean;
      notes?: string[];
    }
  | { ok: false; curve: CurveRow | null; label: string; error: string };

export type MeasurementFields = Pick<
  DeterminationRow,
  | "method"
  | "c14AgeYr"
  | "c14ErrorYr"
  | "f14c"
  | "f14cError"
  | "d13cPermil"
  | "ageNormalised"
  | "isLimit"
  | "curveName"
  | "deltaRYr"
  | "deltaRErrorYr"
  | "freshwaterOffsetYr"
  | "freshwaterOffsetErrorYr"
  | "normalisedToZeroPermil"
  | "deGy"
  | "deErrorGy"
  | "doseRateGyPerKa"
  | "doseRateErrorGyPerKa"
  | "measurementYear"
>;

/**
 * A radiocarbon measurement as calibration reads it: F14C converted, δ13C-normalised if it was
 * not yet; a limit or a post-bomb value is not an age.
 */
export function interpretMeasurement(
  d: Pick<MeasurementFields, "c14AgeYr" | "c14ErrorYr" | "f14c" | "f14cError" | "d13cPermil" | "ageNormalised" | "isLimit"> &
    Partial<Pick<MeasurementFields, "normalisedToZeroPermil">>,
) {
  return interpretRadiocarbon({
    measurement:
      d.c14AgeYr != null
        ? { age: d.c14AgeYr, error: d.c14ErrorYr ?? Number.NaN }
        : { f14c: d.f14c ?? Number.NaN, error: d.f14cError ?? Number.NaN },
    d13c: d.d13cPermil,
    alreadyNormalised: d.ageNormalised,
    normalisedToZeroPermil: d.normalisedToZeroPermil ?? false,
    reportedAsLimit: d.isLimit,
  });
}

/** A bare radiocarbon age (δ13C-normalised, not a limit) on a named curve, as calibrated for the calibration API and page. */
export function radiocarbonAgeFields(
  item: Pick<CalibrationItem, "c14_age" | "c14_error" | "delta_r" | "delta_r_error">,
  curveName: string,
): MeasurementFields {
  return {
    method: "radiocarbon",
    c14AgeYr: item.c14_age,
    c14ErrorYr: item.c14_error,
    f14c: null,
    f14cError: null,
    d13cPermil: null,
    ageNormalised: true,
    isLimit: false,
    curveName,
    deltaRYr: item.delta_r ?? null,
    deltaRErrorYr: item.delta_r_error ?? null,
    freshwaterOffsetYr: null,
    freshwaterOffsetErrorYr: null,
    normalisedToZeroPermil: false,
    deGy: null,
    deErrorGy: null,
    doseRateGyPerKa: null,
    doseRateErrorGyPerKa: null,
    measurementYear: null,
  };
}

/**
 * What calibration is given for a measurement on a curve: the age (and F14C, used near
 * background), the curve's offset (ΔR on a marine curve), and the curve's name for messages.
 * calendarOutcome and the upload check share it, so both refuse the same measurements.
 */
export function calibrationInputFor(
  curve: CurveRow,
  d: Pick<MeasurementFields, "deltaRYr" | "deltaRErrorYr"> &
    Partial<Pick<MeasurementFields, "freshwaterOffsetYr" | "freshwaterOffsetErrorYr">>,
  interpreted: { age: number; error: number; f14c: number; f14cError: number },
): CalibrationInput {
  const offset = appliedOffset(curve.kind === "marine" ? "marine" : "atmospheric", {
    deltaR: d.deltaRYr,
    deltaRError: d.deltaRErrorYr,
    freshwaterOffset: d.freshwaterOffsetYr,
    freshwaterOffsetError: d.freshwaterOffsetErrorYr,
  });
  return {
    age: interpreted.age,
    error: interpreted.error,
    f14c: interpreted.f14c,
    f14cError: interpreted.f14cError,
    deltaR: offset.deltaR,
    deltaRError: offset.deltaRError,
    curveLabel: curve.displayName,
  };
}

export function curveLabel(
  curve: CurveRow,
  deltaR?: number | null,
  deltaRError?: number | null,
  freshwater?: { offset: number | null; error: number | null },
): string {
  const base = `${curve.displayName} (${curve.version})`;
  if (curve.kind !== "marine") {
    if (freshwater?.offset == null) return base;
    return `${base}, freshwater offset ${fmt(freshwater.offset)} ± ${fmt(freshwater.error ?? 0)}`;
  }
  if (deltaR == null) return `${base}, ΔR 0 ± 0 (none given)`;
  return `${base}, ΔR ${fmt(deltaR)} ± ${fmt(deltaRError ?? 0)}`;
}

function fmt(x: number): string {
  return Number.isInteger(x) ? String(x) : x.toFixed(1);
}

/**
 * The calendar age of one measurement: radiocarbon on its named curve (ΔR for marine curves),
 * luminescence as a normal density from De / dose rate and the year of measurement.
 * Curves are looked up by short name through `curveFor`, so a batch shares one lookup.
 */
export function calendarOutcome(
  db: Db,
  d: MeasurementFields,
  curveFor: (name: string) => CurveRow | undefined = (name) => activeCurve(db, name),
): CalendarOutcome {
  if (d.method === "radiocarbon") {
    const name = (d.curveName ?? "intcal20").toLowerCase();
    const curve = curveFor(name);
    if (!curve) return { ok: false, curve: null, label: name, error: `No active curve named "${name}".` };
    const label = curveLabel(curve, d.deltaRYr, d.deltaRErrorYr, {
      offset: d.freshwaterOffsetYr,
      error: d.freshwaterOffsetErrorYr,
    });
    const interpreted = interpretMeasurement(d);
    if (interpreted.kind !== "age") return { ok: false, curve, label, error: interpreted.message };
    try {
      const result = calibrate(preparedCurve(db, curve.id), calibrationInputFor(curve, d, interpreted));
      return {
        ok: true,
        curve,
        label,
        summary: result,
        density: result.density,
        atCurveLimit: result.atCurveLimit,
        notes: result.notes,
      };
    } catch (e) {
      if (e instanceof CalibrationError) return { ok: false, curve, label, error: e.message };
      throw e;
    }
  }
  if (d.method === "luminescence") {
    const label = "luminescence (normal)";
    if (d.deGy == null || d.doseRateGyPerKa == null || d.measurementYear == null) {
      return { ok: false, curve: null, label, error: "De, dose rate and year of measurement are needed for an age." };
    }
    try {
      const age = luminescenceAge(
        { value: d.deGy, error: d.deErrorGy ?? 0 },
        { value: d.doseRateGyPerKa, error: d.doseRateErrorGyPerKa ?? 0 },
      );
      const { calBp, error } = luminescenceAgeToCalBp(age.ageKa, age.errorKa, d.measurementYear);
      const density = normalDensity(calBp, Math.max(error, 1));
      return { ok: true, curve: null, label, summary: summariseDensity(density), density };
    } catch (e) {
      return { ok: false, curve: null, label, error: e instanceof Error ? e.message : String(e) };
    }
  }
  return { ok: false, curve: null, label: d.method, error: `Calendar ages for ${d.method} are not computed yet.` };
}

export function encodeDensity(values: Float32Array): Buffer {
  return Buffer.from(values.buffer, values.byteOffset, values.byteLength);
}

export function decodeDensity(buf: Buffer | Uint8Array, startCalBp: number): CalendarDensity {
  if (buf.byteOffset % 4 === 0) return { startCalBp, values: new Float32Array(buf.buffer, buf.byteOffset, buf.byteLength >> 2) };
  // Copy so the Float32Array is aligned whatever the buffer's offset.
  const copy = new Uint8Array(buf.byteLength);
  copy.set(buf);
  return { startCalBp, values: new Float32Array(copy.buffer) };
}

function roundRanges(ranges: HpdRange[]): HpdRange[] {
  return ranges.map((r) =>
    r.atCurveLimit ? { from: r.from, to: r.to, p: r.p, atCurveLimit: true } : { from: r.from, to: r.to, p: r.p },
  );
}

/**
 * Calibrates the given determinations and stores the results as their current calibration.
 * Results on other curve versions are kept (marked not current); a result on the same curve
 * version is replaced, since the measurement it came from has changed.
 * Runs in the caller's transaction when there is one.
 */
export function calibrateDeterminations(db: Db, ids: number[]): { calibrated: number; failed: number } {
  if (ids.length === 0) return { calibrated: 0, failed: 0 };
  const curveCache = new Map<string, CurveRow | undefined>();
  const curveFor = (name: string) => {
    if (!curveCache.has(name)) curveCache.set(name, activeCurve(db, name));
    return curveCache.get(name);
  };
  const sqlite = db.$client;
  // "+is_current" keeps SQLite on the determination index; the is_current index would scan every current row.
  const demote = sqlite.prepare("update calibrations set is_current = 0 where determination_id = ? and +is_current = 1");
  // A calibration a release names (release_items.calibration_id) is kept, demoted, so the release's
  // density never changes; the others on the same curve version are replaced.
  const dropSame = sqlite.prepare(
    `delete from calibrations where determination_id = ? and coalesce(curve_id, -1) = coalesce(?, -1)
       and not exists (select 1 from release_items ri where ri.calibration_id = calibrations.id)`,
  );
  const insert = sqlite.prepare(
    `insert into calibrations (determination_id, curve_id, curve_label, is_current, median_cal_bp, hpd68, hpd95,
       hpd95_from_bp, hpd95_to_bp, density_start_cal_bp, density, density_sha256, density_length, at_curve_limit,
       notes, error)
     values (?, ?, ?, 1, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?)`,
  );
  let calibrated = 0;
  let failed = 0;
  const run = () => {
    for (let start = 0; start < ids.length; start += 500) {
      const chunk = ids.slice(start, start + 500);
      const rows = db.select().from(determinations).where(inArray(determinations.id, chunk)).all();
      for (const d of rows) {
        const outcome = calendarOutcome(db, d, curveFor);
        const curveId = outcome.curve?.id ?? null;
        dropSame.run(d.id, curveId);
        demote.run(d.id);
        if (outcome.ok) {
          const s = outcome.summary;
          const oldest = s.hpd95.length ? Math.max(...s.hpd95.map((r) => r.from)) : null;
          const youngest = s.hpd95.length ? Math.min(...s.hpd95.map((r) => r.to)) : null;
          const density = encodeDensity(outcome.density.values);
          insert.run(
            d.id,
            curveId,
            outcome.label,
            s.medianCalBp,
            JSON.stringify(roundRanges(s.hpd68)),
            JSON.stringify(roundRanges(s.hpd95)),
            oldest,
            youngest,
            outcome.density.startCalBp,
            density,
            createHash("sha256").update(density).digest("hex"),
            outcome.density.values.length,
            outcome.atCurveLimit ? 1 : 0,
            outcome.notes?.length ? JSON.stringify(outcome.notes) : null,
            null,
          );
          calibrated++;
        } else {
          insert.run(d.id, curveId, outcome.label, null, null, null, null, null, null, null, null, null, 0, null, outcome.error);
          failed++;
        }
      }
    }
  };
  if (sqlite.inTransaction) run();
  // Immediate: a transaction that reads before it writes fails outright if another connection wrote meanwhile.
  else sqlite.transaction(run).immediate();
  return { calibrated, failed };
}

/** Calibrates every determination (seed, curve change), reporting progress between chunks. */
export function calibrateAll(
  db: Db,
  options: { onProgress?: (done: number, total: number) => void; where?: { curveName?: string } } = {},
): { calibrated: number; failed: number } {
  const query = db.select({ id: determinations.id }).from(determinations);
  const rows = options.where?.curveName ? query.where(eq(determinations.curveName, options.where.curveName)).all() : query.all();
  const ids = rows.map((r) => r.id);
  let calibrated = 0;
  let failed = 0;
  const chunk = 1000;
  for (let i = 0; i < ids.length; i += chunk) {
    const r = calibrateDeterminations(db, ids.slice(i, i + chunk));
    calibrated += r.calibrated;
    failed += r.failed;
    options.onProgress?.(Math.min(i + chunk, ids.length), ids.length);
  }
  return { calibrated, failed };
}

export type StoredCalibration = typeof calibrations.$inferSelect;

export function currentCalibration(db: Db, determinationId: number): StoredCalibration | undefined {
  return db
    .select()
    .from(calibrations)
    .where(and(eq(calibrations.determinationId, determinationId), eq(calibrations.isCurrent, true)))
    .get();
}

export function calibrationHistory(db: Db, determinationId: number) {
  return db
    .select({
      id: calibrations.id,
      curveLabel: calibrations.curveLabel,
      isCurrent: calibrations.isCurrent,
      medianCalBp: calibrations.medianCalBp,
      hpd95: calibrations.hpd95,
      error: calibrations.error,
      createdAt: calibrations.createdAt,
      curveVersion: curves.version,
    })
    .from(calibrations)
    .leftJoin(curves, eq(curves.id, calibrations.curveId))
    .where(eq(calibrations.determinationId, determinationId))
    .all();
}

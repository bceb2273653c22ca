import { and, desc, eq } from "drizzle-orm";
import type { Db } from "#app/db/client.server.ts";
import { calibrations, curves, determinations } from "#app/db/schema.ts";
import {
  calendarOutcome,
  decodeDensity,
  interpretMeasurement,
  radiocarbonAgeFields,
} from "#app/models/calibration/calibrations.server.ts";
import { curveWindow, type CurveRow } from "#app/models/calibration/curves.server.ts";
import { plotWindow, type PlotCalibration, type PlotCurve, type PlotMeasurement } from "#app/components/calibration-plot.tsx";
import type { CalendarDensity } from "#app/science/density.ts";
import type { CalibrationItem } from "#app/utils/calibrate-input.ts";

/** Everything <CalibrationPlot/> draws, in plain serialisable values. */
export type CalibrationPlotData = {
  curve: PlotCurve;
  measurement: PlotMeasurement;
  calibration: PlotCalibration;
};

function plotCurve(db: Db, curve: CurveRow, density: CalendarDensity): PlotCurve {
  const w = plotWindow(density);
  return {
    displayName: curve.displayName,
    version: curve.version,
    kind: curve.kind,
    citation: curve.citation,
    doi: curve.doi,
    points: curveWindow(db, curve.id, w.from, w.to),
  };
}

function plainDensity(d: CalendarDensity) {
  return { startCalBp: d.startCalBp, values: Array.from(d.values) };
}

/** Plot of one not-stored item (calibration page without script). Null when it does not calibrate. */
export function plotForItem(db: Db, item: CalibrationItem): CalibrationPlotData | null {
  const outcome = calendarOutcome(db, radiocarbonAgeFields(item, item.curve));
  if (!outcome.ok || !outcome.curve) return null;
  const marine = outcome.curve.kind === "marine";
  return {
    curve: plotCurve(db, outcome.curve, outcome.density),
    measurement: {
      age: item.c14_age,
      error: item.c14_error,
      deltaR: marine ? (item.delta_r ?? 0) : null,
      deltaRError: marine ? (item.delta_r_error ?? 0) : null,
    },
    calibration: {
      medianCalBp: outcome.summary.medianCalBp,
      hpd68: outcome.summary.hpd68,
      hpd95: outcome.summary.hpd95,
      density: plainDensity(outcome.density),
    },
  };
}

/**
 * Plot of a determination's current stored calibration on the curve version it was made with
 * (which may no longer be the active one). Null for luminescence, failed or missing calibrations.
 */
export function plotForDetermination(db: Db, determinationId: number): CalibrationPlotData | null {
  const row = db
    .select({ calibration: calibrations, curve: curves, determination: determinations })
    .from(calibrations)
    .innerJoin(curves, eq(curves.id, calibrations.curveId))
    .innerJoin(determinations, eq(determinations.id, calibrations.determinationId))
    .where(and(eq(calibrations.determinationId, determinationId), eq(calibrations.isCurrent, true)))
    .orderBy(desc(calibrations.id))
    .get();
  if (!row) return null;
  const { calibration: c, curve, determination: d } = row;
  if (c.density == null || c.densityStartCalBp == null || c.medianCalBp == null) return null;
  // The measurement as it was calibrated (F14C converted, δ13C normalised if it was not yet).
  const interpreted = interpretMeasurement(d);
  if (interpreted.kind !== "age") return null;
  const density = decodeDensity(c.density, c.densityStartCalBp);
  const marine = curve.kind === "marine";
  return {
    curve: plotCurve(db, curve, density),
    measurement: {
      age: interpreted.age,
      error: interpreted.error,
      deltaR: marine ? (d.deltaRYr ?? 0) : null,
      deltaRError: marine ? (d.deltaRErrorYr ?? 0) : null,
      freshwaterOffset: marine ? null : d.freshwaterOffsetYr,
      freshwaterOffsetError: marine ? null : d.freshwaterOffsetErrorYr,
    },
    calibration: {
      medianCalBp: c.medianCalBp,
      hpd68: c.hpd68 ?? [],
      hpd95: c.hpd95 ?? [],
      density: plainDensity(density),
    },
  };
}

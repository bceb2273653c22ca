// The one rule for "can this row's measurement be turned into a calendar age?", used by the
// determination form and the upload alike, each problem at the column it concerns.
import type { Db } from "#app/db/client.server.ts";
import { calibrationInputFor, interpretMeasurement } from "#app/models/calibration/calibrations.server.ts";
import { activeCurve, preparedCurve, type CurveRow } from "#app/models/calibration/curves.server.ts";
import { measurementFields } from "#app/models/submission/determinations.server.ts";
import { beyondCurve } from "#app/science/calibration.ts";
import { luminescenceAge } from "#app/science/luminescence.ts";
import type { DeterminationRow, RowIssue } from "#app/utils/determination-input/row.ts";

/**
 * A radiocarbon row's measurement that cannot be read as an age (at `c14_age` or `f14c`), a curve
 * that is not active (at `curve`), or an age the curve cannot reach (at the age's column); a
 * luminescence age that cannot be computed (at `de_gy`). Missing values are the row checker's
 * business, not this rule's. `curveFor` lets a whole upload share one curve look-up.
 */
export function calendarProblem(
  db: Db,
  row: DeterminationRow,
  curveFor: (name: string) => CurveRow | undefined = (name) => activeCurve(db, name),
): RowIssue | null {
  const fields = measurementFields(row);
  if (row.method === "radiocarbon") {
    const ageColumn = row.c14_age != null ? "c14_age" : "f14c";
    const interpreted = interpretMeasurement(fields);
    if (interpreted.kind === "invalid") return { column: ageColumn, message: interpreted.message };
    if (interpreted.kind !== "age") return null;
    const name = (fields.curveName ?? "intcal20").toLowerCase();
    const curve = curveFor(name);
    if (!curve) return { column: "curve", message: `No active curve named "${name}".` };
    const refusal = beyondCurve(preparedCurve(db, curve.id), calibrationInputFor(curve, fields, interpreted));
    return refusal ? { column: ageColumn, message: refusal } : null;
  }
  if (fields.deGy == null || fields.doseRateGyPerKa == null) return null;
  try {
    luminescenceAge(
      { value: fields.deGy, error: fields.deErrorGy ?? 0 },
      { value: fields.doseRateGyPerKa, error: fields.doseRateErrorGyPerKa ?? 0 },
    );
  } catch (e) {
    return { column: "de_gy", message: e instanceof Error ? e.message : String(e) };
  }
  return null;
}

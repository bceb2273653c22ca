// Rows the page tests need beyond tests/factories.ts: a current calibration summary, a review,
// a check result, an audit row and a demo reconstruction. Direct inserts with invented values.
import type { Db } from "#app/db/client.server.ts";
import { auditLog, calibrations, checkResults, reconstructions, reviews } from "#app/db/schema.ts";

/** A current calibration with a symmetric made-up 95.4 % range around the median. */
export function insertCalibration(
  db: Db,
  determinationId: number,
  values: Partial<typeof calibrations.$inferInsert> & { medianCalBp: number },
) {
  const m = values.medianCalBp;
  return db
    .insert(calibrations)
    .values({
      determinationId,
      curveLabel: "IntCal20 (2020)",
      isCurrent: true,
      hpd68: [{ from: m + 60, to: m - 60, p: 0.683 }],
      hpd95: [
        { from: m + 150, to: m + 90, p: 0.2 },
        { from: m + 40, to: m - 140, p: 0.754 },
      ],
      hpd95FromBp: m + 150,
      hpd95ToBp: m - 140,
      ...values,
    })
    .returning()
    .get();
}

export function insertReview(
  db: Db,
  determinationId: number,
  reviewerId: number,
  values: Partial<typeof reviews.$inferInsert> & { grade: number },
) {
  return db
    .insert(reviews)
    .values({ determinationId, reviewerId, ...values })
    .returning()
    .get();
}

export function insertCheck(db: Db, determinationId: number, values: Partial<typeof checkResults.$inferInsert> = {}) {
  return db
    .insert(checkResults)
    .values({ determinationId, check: "value_range", severity: "pass", message: "Within the curve's range.", ...values })
    .returning()
    .get();
}

export function insertAudit(db: Db, values: typeof auditLog.$inferInsert) {
  return db.insert(auditLog).values(values).returning().get();
}

/** A demo reconstruction with straight east–west isochrones at the given ages. */
export function insertReconstruction(db: Db, ages: number[], values: Partial<typeof reconstructions.$inferInsert> = {}) {
  return db
    .insert(reconstructions)
    .values({
      name: "Test margins",
      isDemo: true,
      geojson: {
        type: "FeatureCollection",
        features: ages.map((age) => ({
          type: "Feature",
          properties: { age_cal_bp: age },
          geometry: {
            type: "LineString",
            coordinates: [
              [-68, 50 + age / 1000],
              [-64, 50 + age / 1000],
            ],
          },
        })),
      },
      ...values,
    })
    .returning()
    .get();
}

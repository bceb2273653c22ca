// Stored dose rates brought up to the full model: every luminescence determination whose dose rate
// the registry computed (dose_rate_computed) is computed again from its stored inputs with every
// term and every error, and where the value or the error changes it is stored (version + 1, an
// audit row with before and after) and calibrated again — one transaction. A lab's own dose rate
// is never touched. Running it again changes nothing (idempotent).

import { eq } from "drizzle-orm";
import type { Db } from "#app/db/client.server.ts";
import { determinations, samples, sites } from "#app/db/schema.ts";
import { audit } from "#app/models/audit.server.ts";
import { calibrateDeterminations } from "#app/models/calibration/calibrations.server.ts";
import { doseRateFromFields } from "#app/science/dose-rate-fields.ts";

export const DOSE_RATE_RECOMPUTE_ACTION = "determination.dose_rate_recompute";

export type RecomputeResult = {
  /** Determinations with a computed dose rate that were looked at. */
  examined: number;
  /** Of those, the ones whose stored dose rate or error changed. */
  changed: number;
  /** Ones whose inputs no longer give a dose rate (left as they are, with the reason). */
  failed: { id: number; labCode: string; message: string }[];
  changedIds: number[];
};

/** Relative change below which a stored value counts as the same (floating-point noise only). */
const SAME = 1e-12;

function differs(stored: number | null, next: number): boolean {
  if (stored == null) return true;
  return Math.abs(stored - next) > SAME * Math.max(1, Math.abs(next));
}

export function recomputeDoseRates(db: Db, options: { actorId?: number | null } = {}): RecomputeResult {
  const rows = db
    .select({ d: determinations, site: { latitude: sites.latitude, longitude: sites.longitude, elevationM: sites.elevationM } })
    .from(determinations)
    .innerJoin(samples, eq(samples.id, determinations.sampleId))
    .innerJoin(sites, eq(sites.id, samples.siteId))
    .where(eq(determinations.doseRateComputed, true))
    .all();
  const result: RecomputeResult = { examined: rows.length, changed: 0, failed: [], changedIds: [] };
  db.$client.transaction(() => {
    for (const { d, site } of rows) {
      const r = doseRateFromFields({ ...d, site });
      if (!r || !r.ok) {
        result.failed.push({ id: d.id, labCode: d.labCode, message: r ? r.message : "K, U, Th or water content is missing." });
        continue;
      }
      const { total, totalError } = r.result;
      if (!differs(d.doseRateGyPerKa, total) && !differs(d.doseRateErrorGyPerKa, totalError)) continue;
      const before = { doseRateGyPerKa: d.doseRateGyPerKa, doseRateErrorGyPerKa: d.doseRateErrorGyPerKa, version: d.version };
      const after = { doseRateGyPerKa: total, doseRateErrorGyPerKa: totalError, version: d.version + 1 };
      db.update(determinations)
        .set({ ...after, updatedAt: new Date() })
        .where(eq(determinations.id, d.id))
        .run();
      audit(db, {
        actorId: options.actorId ?? null,
        action: DOSE_RATE_RECOMPUTE_ACTION,
        entity: "determination",
        entityId: d.id,
        before,
        after,
      });
      result.changedIds.push(d.id);
    }
    result.changed = result.changedIds.length;
    calibrateDeterminations(db, result.changedIds);
  })();
  return result;
}

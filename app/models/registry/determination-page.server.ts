import { and, asc, desc, eq, ne, sql } from "drizzle-orm";
import { hemisphereWarning } from "#app/science/reservoir.ts";
import { curveWords } from "#app/utils/labels.ts";
import type { Db } from "#app/db/client.server.ts";
import {
  auditLog,
  calibrations,
  checkResults,
  determinations,
  labs,
  publications,
  reviews,
  samples,
  sites,
  uploadBatches,
  users,
} from "#app/db/schema.ts";

/*
 * Everything the determination page shows, in a fixed handful of queries (no per-row lookups):
 * the determination with its sample, site, lab and publication; the current calibration;
 * siblings on the sample and at the site; the latest review; check results; the audit history.
 */

export type FieldChange = { field: string; before: unknown; after: unknown };

export type AuditEntry = {
  id: number;
  at: Date;
  action: string;
  actorName: string | null;
  changes: FieldChange[];
  /** True for a creation (no before) or removal (no after): the diff is the whole record. */
  whole: "created" | "removed" | null;
};

/** Fields whose change is bookkeeping rather than content; left out of the diff. */
const QUIET_FIELDS = new Set(["version", "updatedAt", "updated_at"]);

export function diffRecords(before: Record<string, unknown> | null, after: Record<string, unknown> | null): FieldChange[] {
  const keys = new Set([...Object.keys(before ?? {}), ...Object.keys(after ?? {})]);
  const changes: FieldChange[] = [];
  for (const field of keys) {
    if (QUIET_FIELDS.has(field)) continue;
    const b = before?.[field] ?? null;
    const a = after?.[field] ?? null;
    if (JSON.stringify(b) !== JSON.stringify(a)) changes.push({ field, before: b, after: a });
  }
  return changes.sort((x, y) => x.field.localeCompare(y.field));
}

export function determinationDetail(db: Db, id: number) {
  const head = db
    .select({
      determination: determinations,
      sample: samples,
      site: sites,
      lab: { id: labs.id, name: labs.name, codePrefix: labs.codePrefix, city: labs.city },
      publication: {
        id: publications.id,
        citation: publications.citation,
        doi: publications.doi,
        year: publications.year,
        title: publications.title,
      },
      contributor: { id: users.id, name: users.name },
      upload: { publicId: uploadBatches.publicId, fileName: uploadBatches.fileName },
    })
    .from(determinations)
    .innerJoin(samples, eq(samples.id, determinations.sampleId))
    .innerJoin(sites, eq(sites.id, samples.siteId))
    .innerJoin(labs, eq(labs.id, determinations.labId))
    .leftJoin(publications, eq(publications.id, determinations.publicationId))
    .leftJoin(users, eq(users.id, determinations.contributorId))
    .leftJoin(uploadBatches, eq(uploadBatches.id, determinations.uploadBatchId))
    .where(eq(determinations.id, id))
    .get();
  if (!head) return null;

  // The density blob is left to the calibration plot, which fetches what it needs itself.
  const calibration =
    db
      .select({
        id: calibrations.id,
        curveLabel: calibrations.curveLabel,
        medianCalBp: calibrations.medianCalBp,
        hpd68: calibrations.hpd68,
        hpd95: calibrations.hpd95,
        hpd95FromBp: calibrations.hpd95FromBp,
        hpd95ToBp: calibrations.hpd95ToBp,
        atCurveLimit: calibrations.atCurveLimit,
        notes: calibrations.notes,
        error: calibrations.error,
        createdAt: calibrations.createdAt,
      })
      .from(calibrations)
      .where(and(eq(calibrations.determinationId, id), eq(calibrations.isCurrent, true)))
      .orderBy(desc(calibrations.id))
      .get() ?? null;

  const earlierCalibrations = db
    .select({
      id: calibrations.id,
      curveLabel: calibrations.curveLabel,
      medianCalBp: calibrations.medianCalBp,
      createdAt: calibrations.createdAt,
    })
    .from(calibrations)
    .where(and(eq(calibrations.determinationId, id), eq(calibrations.isCurrent, false)))
    .orderBy(desc(calibrations.id))
    .all();

  // Siblings: every other determination at the same site; the page splits them by sample.
  const siblings = db
    .select({
      id: determinations.id,
      labCode: determinations.labCode,
      method: determinations.method,
      signal: determinations.signal,
      c14AgeYr: determinations.c14AgeYr,
      c14ErrorYr: determinations.c14ErrorYr,
      f14c: determinations.f14c,
      f14cError: determinations.f14cError,
      isLimit: determinations.isLimit,
      deGy: determinations.deGy,
      deErrorGy: determinations.deErrorGy,
      doseRateGyPerKa: determinations.doseRateGyPerKa,
      doseRateErrorGyPerKa: determinations.doseRateErrorGyPerKa,
      grade: determinations.grade,
      status: determinations.status,
      sampleId: samples.id,
      fieldCode: samples.fieldCode,
      material: samples.material,
      medianCalBp: calibrations.medianCalBp,
    })
    .from(determinations)
    .innerJoin(samples, eq(samples.id, determinations.sampleId))
    .leftJoin(calibrations, and(eq(calibrations.determinationId, determinations.id), eq(calibrations.isCurrent, true)))
    .where(and(eq(samples.siteId, head.site.id), ne(determinations.id, id)))
    .orderBy(
      sql`${samples.stratOrder} is null`,
      asc(samples.stratOrder),
      sql`${samples.depthCm} is null`,
      asc(samples.depthCm),
      asc(samples.fieldCode),
      asc(determinations.labCode),
    )
    .all();

  const review =
    db
      .select({
        id: reviews.id,
        grade: reviews.grade,
        flags: reviews.flags,
        comment: reviews.comment,
        createdAt: reviews.createdAt,
        reviewerName: users.name,
      })
      .from(reviews)
      .innerJoin(users, eq(users.id, reviews.reviewerId))
      .where(eq(reviews.determinationId, id))
      .orderBy(desc(reviews.createdAt), desc(reviews.id))
      .get() ?? null;

  const reviewCount = db.$client.prepare("select count(*) as n from reviews where determination_id = ?").get(id) as { n: number };

  const checks = db
    .select({
      id: checkResults.id,
      check: checkResults.check,
      severity: checkResults.severity,
      message: checkResults.message,
      suggestedFlag: checkResults.suggestedFlag,
      createdAt: checkResults.createdAt,
    })
    .from(checkResults)
    .where(eq(checkResults.determinationId, id))
    .orderBy(asc(checkResults.check), asc(checkResults.id))
    .all();

  const auditRows = db
    .select({
      id: auditLog.id,
      at: auditLog.at,
      action: auditLog.action,
      before: auditLog.before,
      after: auditLog.after,
      actorName: users.name,
    })
    .from(auditLog)
    .leftJoin(users, eq(users.id, auditLog.actorId))
    .where(and(eq(auditLog.entity, "determination"), eq(auditLog.entityId, String(id))))
    .orderBy(desc(auditLog.at), desc(auditLog.id))
    .all();

  const history: AuditEntry[] = auditRows.map((r) => ({
    id: r.id,
    at: r.at,
    action: r.action,
    actorName: r.actorName,
    changes: diffRecords(r.before ?? null, r.after ?? null),
    whole: r.before == null && r.after != null ? "created" : r.after == null && r.before != null ? "removed" : null,
  }));

  const d = head.determination;
  // A site calibrated on the other hemisphere's atmospheric curve (marine curves have none).
  const hemisphere =
    d.method === "radiocarbon" && d.curveName
      ? hemisphereWarning(head.site.latitude, d.curveName, curveWords(d.curveName))
      : null;

  return {
    ...head,
    hemisphere,
    publication: head.publication?.id != null ? head.publication : null,
    contributor: head.contributor?.id != null ? head.contributor : null,
    upload: head.upload?.publicId != null ? head.upload : null,
    calibration,
    earlierCalibrations,
    sameSample: siblings.filter((s) => s.sampleId === head.sample.id),
    sameSite: siblings.filter((s) => s.sampleId !== head.sample.id),
    review,
    reviewCount: reviewCount.n,
    checks,
    history,
  };
}

export type DeterminationDetail = NonNullable<ReturnType<typeof determinationDetail>>;

// Creating, editing and withdrawing a determination from the form: each one transaction with its
// audit row and the determination's calibration.

import { eq } from "drizzle-orm";
import { runChecksFor } from "#app/models/review/check-run.server.ts";
import type { Db } from "#app/db/client.server.ts";
import { determinations, samples, sites, type Status } from "#app/db/schema.ts";
import { audit } from "#app/models/audit.server.ts";
import { calibrateDeterminations } from "#app/models/calibration/calibrations.server.ts";
import {
  auditSnapshot,
  determinationValues,
  insertDetermination,
  type DeterminationRow as StoredDetermination,
} from "#app/models/submission/determinations.server.ts";
import type { SubmissionValue } from "#app/utils/submission-form.ts";
import { type Actor, planFormRow, SubmissionRefused } from "#app/models/submission/form/schema.server.ts";

export type CreateResult = { id: number; createdSite: boolean; joinedSample: boolean; calendarAge: boolean };

/** Site, sample, lab and publication for the form's row, written where needed; call inside the write's transaction. */
function placeRow(db: Db, value: SubmissionValue, editing: StoredDetermination | null, actor: Actor) {
  const { placement, plan, issues } = planFormRow(db, value, editing, actor.userId);
  if (!plan) throw new SubmissionRefused(issues[0]?.message ?? "This determination cannot be placed in the registry.", 409);
  const placed = placement.place(plan, { ip: actor.ip });
  const joinedSample = "sample" in plan.sample && plan.sample.sample.id !== editing?.sampleId;
  return { ...placed, joinedSample };
}

/** A new determination from the form: one transaction with its audit row and calibration. */
export function createSubmission(db: Db, value: SubmissionValue, actor: Actor): CreateResult {
  return db.$client.transaction(() => {
    const placed = placeRow(db, value, null, actor);
    const det = insertDetermination(
      db,
      {
        ...determinationValues(value.row),
        sampleId: placed.sampleId,
        labId: placed.labId,
        publicationId: placed.publicationId,
        contributorId: actor.userId,
        status: "submitted",
      },
      actor.userId,
    );
    const cal = calibrateDeterminations(db, [det.id]);
    runChecksFor(db, [det.id]);
    return { id: det.id, createdSite: placed.createdSite, joinedSample: placed.joinedSample, calendarAge: cal.calibrated === 1 };
  })();
}

export function getDetermination(db: Db, id: number): StoredDetermination | undefined {
  return db.select().from(determinations).where(eq(determinations.id, id)).get();
}

/** A contributor may change or withdraw a determination in these states: not once it is graded or withdrawn. */
export function editableStatus(status: Status): boolean {
  return status !== "graded" && status !== "withdrawn";
}

/**
 * Whether this person may still change the determination: only its contributor, and only while it
 * is not graded. Earlier reviews do not lock it: an editor who reopens a graded determination
 * hands it back to its contributor, and a question waiting for an answer invites an edit.
 */
export function editRefusal(det: StoredDetermination, userId: number): string | null {
  if (det.contributorId !== userId) return `Only the contributor who submitted ${det.labCode} can change or withdraw it.`;
  if (det.status === "withdrawn") return `${det.labCode} has been withdrawn; it can no longer be changed.`;
  if (!editableStatus(det.status)) {
    return `${det.labCode} has been graded by a reviewer, so it can no longer be changed or withdrawn. Ask the reviewer through the determination's review questions if something needs correcting.`;
  }
  return null;
}

const UNTRACKED = new Set(["version", "updatedAt", "createdAt"]);

/** The sample and site a determination hangs on, as its audit rows record them. */
function placeSnapshot(db: Db, sampleId: number): Record<string, unknown> | null {
  const row = db
    .select({
      siteId: sites.id,
      siteName: sites.name,
      fieldCode: samples.fieldCode,
      material: samples.material,
      depthCm: samples.depthCm,
      stratUnit: samples.stratUnit,
      stratOrder: samples.stratOrder,
      context: samples.context,
    })
    .from(samples)
    .innerJoin(sites, eq(sites.id, samples.siteId))
    .where(eq(samples.id, sampleId))
    .get();
  return row ?? null;
}

export type UpdateResult = { changed: boolean; version: number };

/**
 * Applies the edited form: determination (version + 1, one audit row with before and after,
 * including its sample), sample and site as needed, and a fresh calibration — one transaction.
 * The permission is checked again inside it, so a grade recorded meanwhile wins.
 */
export function updateSubmission(db: Db, id: number, value: SubmissionValue, actor: Actor): UpdateResult {
  return db.$client.transaction(() => {
    const before = getDetermination(db, id);
    if (!before) throw new SubmissionRefused("There is no determination with this number.", 404);
    const refusal = editRefusal(before, actor.userId);
    if (refusal) throw new SubmissionRefused(refusal, 403);
    const placeBefore = placeSnapshot(db, before.sampleId);
    const placed = placeRow(db, value, before, actor);
    const next = {
      ...determinationValues(value.row),
      sampleId: placed.sampleId,
      labId: placed.labId,
      publicationId: placed.publicationId,
    };
    // The factors a lab's own dose rate was computed with stay recorded while that dose rate stands.
    if (next.conversionFactors == null && before.conversionFactors != null && next.doseRateGyPerKa === before.doseRateGyPerKa) {
      (next as { conversionFactors: string | null }).conversionFactors = before.conversionFactors;
    }
    const placeAfter = placeSnapshot(db, placed.sampleId);
    const fieldChanged = Object.entries(next).some(
      ([k, v]) =>
        !UNTRACKED.has(k) && JSON.stringify((before as Record<string, unknown>)[k] ?? null) !== JSON.stringify(v ?? null),
    );
    if (!fieldChanged && JSON.stringify(placeBefore) === JSON.stringify(placeAfter)) {
      return { changed: false, version: before.version };
    }
    const after = db
      .update(determinations)
      .set({ ...next, version: before.version + 1, updatedAt: new Date() })
      .where(eq(determinations.id, id))
      .returning()
      .get();
    audit(db, {
      actorId: actor.userId,
      action: "determination.update",
      entity: "determination",
      entityId: id,
      before: { ...auditSnapshot(before), sample: placeBefore },
      after: { ...auditSnapshot(after), sample: placeAfter },
      ip: actor.ip,
    });
    if (placed.sampleId !== before.sampleId) removeIfOrphaned(db, before.sampleId, actor);
    calibrateDeterminations(db, [id]);
    runChecksFor(db, [id]);
    return { changed: true, version: after.version };
  })();
}

/** Deletes a sample an edit left without determinations (its only one moved to another sample). */
function removeIfOrphaned(db: Db, sampleId: number, actor: Actor) {
  const left = db.$client.prepare("select count(*) from determinations where sample_id = ?").pluck().get(sampleId) as number;
  if (left > 0) return;
  const sample = db.select().from(samples).where(eq(samples.id, sampleId)).get();
  if (!sample) return;
  db.delete(samples).where(eq(samples.id, sampleId)).run();
  audit(db, {
    actorId: actor.userId,
    action: "sample.delete",
    entity: "sample",
    entityId: sampleId,
    before: { ...sample, createdAt: sample.createdAt.toISOString() },
    after: null,
    ip: actor.ip,
  });
}

/** Withdraws a determination: status withdrawn, version + 1, audit row with before and after. */
export function withdrawSubmission(db: Db, id: number, actor: Actor): StoredDetermination {
  return db.$client.transaction(() => {
    const before = getDetermination(db, id);
    if (!before) throw new SubmissionRefused("There is no determination with this number.", 404);
    const refusal = editRefusal(before, actor.userId);
    if (refusal) throw new SubmissionRefused(refusal, 403);
    const after = db
      .update(determinations)
      .set({ status: "withdrawn" satisfies Status, version: before.version + 1, updatedAt: new Date() })
      .where(eq(determinations.id, id))
      .returning()
      .get();
    audit(db, {
      actorId: actor.userId,
      action: "determination.withdraw",
      entity: "determination",
      entityId: id,
      before: auditSnapshot(before),
      after: auditSnapshot(after),
      ip: actor.ip,
    });
    runChecksFor(db, [id]);
    return after;
  })();
}

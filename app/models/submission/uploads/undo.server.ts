// Undoing a committed upload: removes what it created, in one transaction, when nothing else depends on it.

import { and, desc, eq, inArray } from "drizzle-orm";
import type { Db } from "#app/db/client.server.ts";
import {
  auditLog,
  calibrations,
  checkResults,
  determinations,
  modelRunScores,
  releaseItems,
  reviews,
  samples,
  sites,
  uploadBatches,
} from "#app/db/schema.ts";
import { audit } from "#app/models/audit.server.ts";
import { auditSnapshot } from "#app/models/submission/determinations.server.ts";
import type { BatchRow } from "#app/models/submission/uploads/batches.server.ts";
import { CommitRefused } from "#app/models/submission/uploads/commit.server.ts";

/**
 * Takes a committed batch back out of the registry, provided no reviewer has touched any of its
 * determinations and none is in a release or a model-run score: its determinations (with their
 * calibrations and checks) and the sites and samples created only for it. Audited, one transaction.
 */
export function undoUpload(db: Db, batch: BatchRow, actor: { userId: number; ip?: string | null }): { removed: number } {
  if (batch.userId !== actor.userId) throw new CommitRefused("Not found.", 404);
  if (batch.status !== "committed")
    throw new CommitRefused(`This upload is ${batch.status}; only a committed upload can be undone.`);
  return db.transaction((tx) => {
    const dets = tx.select().from(determinations).where(eq(determinations.uploadBatchId, batch.id)).all();
    const ids = dets.map((d) => d.id);
    const blocked = (table: typeof reviews | typeof releaseItems | typeof modelRunScores, what: string) => {
      for (let i = 0; i < ids.length; i += 500) {
        const hit = tx
          .select({ id: table.determinationId })
          .from(table)
          .where(inArray(table.determinationId, ids.slice(i, i + 500)))
          .limit(1)
          .get();
        if (hit) throw new CommitRefused(`This upload cannot be undone: ${what}.`);
      }
    };
    blocked(reviews, "a reviewer has already graded some of its determinations");
    blocked(releaseItems, "some of its determinations are in a published release");
    blocked(modelRunScores, "some of its determinations have model-run scores");
    if (dets.some((d) => d.status !== "submitted")) {
      throw new CommitRefused("This upload cannot be undone: some of its determinations are already in review or withdrawn.");
    }
    const commitEntry = tx
      .select({ after: auditLog.after })
      .from(auditLog)
      .where(and(eq(auditLog.action, "upload.commit"), eq(auditLog.entityId, batch.publicId)))
      .orderBy(desc(auditLog.id))
      .get();
    const createdSampleIds = ((commitEntry?.after?.createdSampleIds as number[] | undefined) ?? []).slice();
    const createdSiteIds = ((commitEntry?.after?.createdSiteIds as number[] | undefined) ?? []).slice();
    for (let i = 0; i < ids.length; i += 500) {
      const chunk = ids.slice(i, i + 500);
      tx.delete(calibrations).where(inArray(calibrations.determinationId, chunk)).run();
      tx.delete(checkResults).where(inArray(checkResults.determinationId, chunk)).run();
    }
    for (const d of dets) {
      tx.delete(determinations).where(eq(determinations.id, d.id)).run();
      audit(tx, {
        actorId: actor.userId,
        action: "determination.delete",
        entity: "determination",
        entityId: d.id,
        before: auditSnapshot(d),
        after: null,
        ip: actor.ip,
      });
    }
    // Samples and sites the batch created, unless something else has come to use them since.
    const sampleStillUsed = db.$client.prepare("select 1 from determinations where sample_id = ? limit 1").pluck();
    const removedSamples: number[] = [];
    for (const id of createdSampleIds) {
      if (!sampleStillUsed.get(id)) {
        tx.delete(samples).where(eq(samples.id, id)).run();
        removedSamples.push(id);
      }
    }
    const siteStillUsed = db.$client.prepare("select 1 from samples where site_id = ? limit 1").pluck();
    const removedSites: number[] = [];
    for (const id of createdSiteIds) {
      if (!siteStillUsed.get(id)) {
        tx.delete(sites).where(eq(sites.id, id)).run();
        removedSites.push(id);
      }
    }
    tx.update(uploadBatches).set({ status: "undone", undoneAt: new Date() }).where(eq(uploadBatches.id, batch.id)).run();
    audit(tx, {
      actorId: actor.userId,
      action: "upload.undo",
      entity: "upload_batch",
      entityId: batch.publicId,
      before: { committed: ids.length },
      after: { removedDeterminations: ids.length, removedSampleIds: removedSamples, removedSiteIds: removedSites },
      ip: actor.ip,
    });
    return { removed: ids.length };
  });
}

// Undoing a committed upload: removes what it created, in one transaction, when nothing else depends on it.
// One rule (undoRefusals) decides both whether the uploads list offers Undo and whether the undo runs.

import { eq, inArray } from "drizzle-orm";
import type { Db } from "#app/db/client.server.ts";
import { calibrations, checkResults, determinations, uploadBatches } from "#app/db/schema.ts";
import { audit } from "#app/models/audit.server.ts";
import { runChecksFor, type RemovedDetermination } from "#app/models/review/check-run.server.ts";
import { auditSnapshot } from "#app/models/submission/determinations.server.ts";
import type { BatchRow } from "#app/models/submission/uploads/batches.server.ts";
import { CommitRefused } from "#app/models/submission/uploads/commit.server.ts";

type Blockers = { reviewed: number; released: number; scored: number; withdrawn: number; moved: number };

/**
 * Why each of these committed batches can no longer be undone; a batch absent from the answer can be.
 * Refused once any of its determinations has a review, is in a published release, has a model-run
 * score, or is no longer simply submitted (in review, awaiting an answer, graded or withdrawn).
 */
export function undoRefusals(db: Db, batchIds: number[]): Map<number, string> {
  const out = new Map<number, string>();
  for (let i = 0; i < batchIds.length; i += 500) {
    const chunk = batchIds.slice(i, i + 500);
    const rows = db.$client
      .prepare(
        `select d.upload_batch_id as batch,
           max(exists(select 1 from reviews r where r.determination_id = d.id)) as reviewed,
           max(exists(select 1 from release_items r where r.determination_id = d.id)) as released,
           max(exists(select 1 from model_run_scores r where r.determination_id = d.id)) as scored,
           max(d.status = 'withdrawn') as withdrawn,
           max(d.status != 'submitted') as moved
         from determinations d where d.upload_batch_id in (${chunk.map(() => "?").join(",")})
         group by d.upload_batch_id`,
      )
      .all(...chunk) as (Blockers & { batch: number })[];
    for (const r of rows) {
      const why = r.reviewed
        ? "a reviewer has already graded some of its determinations"
        : r.released
          ? "some of its determinations are in a published release"
          : r.scored
            ? "some of its determinations have model-run scores"
            : r.withdrawn
              ? "some of its determinations have been withdrawn"
              : r.moved
                ? "some of its determinations are already in review"
                : null;
      if (why) out.set(r.batch, `This upload cannot be undone: ${why}.`);
    }
  }
  return out;
}

/**
 * Takes a committed batch back out of the registry when undoRefusals allows it: its determinations
 * (with their calibrations and checks) and the sites, samples and publications it created that nothing
 * else uses since; the determinations they leave behind nearby are rechecked. Audited, one transaction.
 */
export function undoUpload(db: Db, batch: BatchRow, actor: { userId: number; ip?: string | null }): { removed: number } {
  if (batch.userId !== actor.userId) throw new CommitRefused("Not found.", 404);
  if (batch.status !== "committed")
    throw new CommitRefused(`This upload is ${batch.status}; only a committed upload can be undone.`);
  return db.transaction((tx) => {
    const refusal = undoRefusals(db, [batch.id]).get(batch.id);
    if (refusal) throw new CommitRefused(refusal);
    const dets = tx.select().from(determinations).where(eq(determinations.uploadBatchId, batch.id)).all();
    const ids = dets.map((d) => d.id);
    // Where the removed determinations were, so their neighbours and lab-code twins are rechecked once they are gone.
    const removedPlaces: RemovedDetermination[] = [];
    const placeOf = db.$client.prepare(
      "select st.latitude, st.longitude from samples s join sites st on st.id = s.site_id where s.id = ?",
    );
    for (const d of dets) {
      const at = placeOf.get(d.sampleId) as { latitude: number; longitude: number } | undefined;
      if (at) removedPlaces.push({ ...at, labCode: d.labCode });
    }
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
    // What the batch created, unless something else has come to use it since: samples before the sites they stand on.
    const removedSamples = removeUnusedCreated(db, batch.id, "samples", "determinations", "sample_id");
    const removedSites = removeUnusedCreated(db, batch.id, "sites", "samples", "site_id");
    const removedPublications = removeUnusedCreated(db, batch.id, "publications", "determinations", "publication_id");
    runChecksFor(db, [], removedPlaces);
    tx.update(uploadBatches).set({ status: "undone", undoneAt: new Date() }).where(eq(uploadBatches.id, batch.id)).run();
    audit(tx, {
      actorId: actor.userId,
      action: "upload.undo",
      entity: "upload_batch",
      entityId: batch.publicId,
      before: { committed: ids.length },
      after: {
        removedDeterminations: ids.length,
        removedSampleIds: removedSamples,
        removedSiteIds: removedSites,
        removedPublicationIds: removedPublications,
      },
      ip: actor.ip,
    });
    return { removed: ids.length };
  });
}

/**
 * Deletes the rows of `table` the batch created that no row of `usedBy` points at any more (through
 * `column`), and gives their ids. Table and column names come from this file only. In the caller's transaction.
 */
function removeUnusedCreated(
  db: Db,
  batchId: number,
  table: "samples" | "sites" | "publications",
  usedBy: "determinations" | "samples",
  column: "sample_id" | "site_id" | "publication_id",
): number[] {
  const sqlite = db.$client;
  const created = sqlite.prepare(`select id from ${table} where created_in_batch_id = ?`).pluck().all(batchId) as number[];
  const stillUsed = sqlite.prepare(`select 1 from ${usedBy} where ${column} = ? limit 1`).pluck();
  const remove = sqlite.prepare(`delete from ${table} where id = ?`);
  return created.filter((id) => !stillUsed.get(id) && remove.run(id).changes > 0);
}

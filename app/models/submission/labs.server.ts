// Labs registered from uploads (a new lab_name or an unknown code prefix) wait for an editor, who
// confirms each one (perhaps correcting its name and prefix) or merges it into the lab it really is.

import { and, eq, ne, sql } from "drizzle-orm";
import type { Db } from "#app/db/client.server.ts";
import { determinations, labs, uploadBatches, users } from "#app/db/schema.ts";
import { audit } from "#app/models/audit.server.ts";

export type UnconfirmedLab = {
  id: number;
  name: string;
  codePrefix: string;
  registeredBy: string | null;
  createdAt: Date;
  determinations: number;
  exampleCodes: string[];
};

/** Unconfirmed labs, oldest first, with how many determinations name them and a few of their lab codes. */
export function listUnconfirmedLabs(db: Db): UnconfirmedLab[] {
  const rows = db
    .select({
      id: labs.id,
      name: labs.name,
      codePrefix: labs.codePrefix,
      registeredBy: users.name,
      createdAt: labs.createdAt,
      determinations: sql<number>`(select count(*) from determinations d where d.lab_id = ${labs.id})`,
      exampleCodes: sql<
        string | null
      >`(select group_concat(lab_code, ' ') from (select lab_code from determinations d where d.lab_id = ${labs.id} order by d.id limit 3))`,
    })
    .from(labs)
    .leftJoin(users, eq(users.id, labs.registeredBy))
    .where(eq(labs.confirmed, false))
    .orderBy(labs.createdAt, labs.id)
    .all();
  return rows.map((r) => ({ ...r, exampleCodes: r.exampleCodes ? r.exampleCodes.split(" ") : [] }));
}

/** Confirmed labs, the targets of a merge. */
export function listConfirmedLabs(db: Db) {
  return db
    .select({ id: labs.id, name: labs.name, codePrefix: labs.codePrefix })
    .from(labs)
    .where(eq(labs.confirmed, true))
    .orderBy(labs.name)
    .all();
}

/** A refusal the editor can act on; `status` is the HTTP answer. */
export class LabChangeRefused extends Error {
  constructor(
    message: string,
    readonly status: 400 | 404 | 409 = 409,
  ) {
    super(message);
  }
}

type Actor = { actorId: number; ip?: string | null };

function unconfirmed(db: Db, id: number) {
  const lab = db.select().from(labs).where(eq(labs.id, id)).get();
  if (!lab) throw new LabChangeRefused("There is no such lab.", 404);
  if (lab.confirmed) throw new LabChangeRefused(`${lab.name} is already confirmed.`);
  return lab;
}

/** Confirms a lab, with the name and prefix the editor settled on; audited. */
export function confirmLab(db: Db, id: number, values: { name: string; codePrefix: string }, actor: Actor) {
  return db.$client.transaction(() => {
    const before = unconfirmed(db, id);
    const name = values.name.trim();
    const codePrefix = values.codePrefix.trim();
    if (!name || !codePrefix) throw new LabChangeRefused("Give the lab's name and its code prefix.", 400);
    const clash = db
      .select({ name: labs.name, codePrefix: labs.codePrefix })
      .from(labs)
      .where(
        and(ne(labs.id, id), sql`(lower(${labs.name}) = lower(${name}) or lower(${labs.codePrefix}) = lower(${codePrefix}))`),
      )
      .get();
    if (clash) {
      throw new LabChangeRefused(
        `${clash.name} (prefix ${clash.codePrefix}) already has that ${clash.name.toLowerCase() === name.toLowerCase() ? "name" : "prefix"}: merge into it instead.`,
      );
    }
    const after = db.update(labs).set({ name, codePrefix, confirmed: true }).where(eq(labs.id, id)).returning().get();
    audit(db, {
      actorId: actor.actorId,
      action: "lab.confirm",
      entity: "lab",
      entityId: id,
      before: { name: before.name, codePrefix: before.codePrefix, confirmed: false },
      after: { name: after.name, codePrefix: after.codePrefix, confirmed: true },
      ip: actor.ip,
    });
    return after;
  })();
}

/**
 * Merges an unconfirmed lab into another lab: its determinations, the people and the upload
 * batches that name it move over, and the unconfirmed lab is removed; one transaction, audited.
 */
export function mergeLab(db: Db, id: number, intoId: number, actor: Actor) {
  return db.$client.transaction(() => {
    const from = unconfirmed(db, id);
    if (intoId === id) throw new LabChangeRefused("Choose another lab to merge into.", 400);
    const into = db.select().from(labs).where(eq(labs.id, intoId)).get();
    if (!into) throw new LabChangeRefused("There is no such lab to merge into.", 404);
    const moved = db.update(determinations).set({ labId: into.id }).where(eq(determinations.labId, id)).run().changes;
    db.update(users).set({ labId: into.id }).where(eq(users.labId, id)).run();
    db.update(uploadBatches).set({ labId: into.id }).where(eq(uploadBatches.labId, id)).run();
    db.delete(labs).where(eq(labs.id, id)).run();
    audit(db, {
      actorId: actor.actorId,
      action: "lab.merge",
      entity: "lab",
      entityId: id,
      before: { name: from.name, codePrefix: from.codePrefix, confirmed: false },
      after: { mergedInto: into.id, name: into.name, determinationsMoved: moved },
      ip: actor.ip,
    });
    return { into, moved };
  })();
}

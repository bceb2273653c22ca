import { and, eq, ne } from "drizzle-orm";
import type { Db } from "#app/db/client.server.ts";
import { curves } from "#app/db/schema.ts";
import { audit } from "#app/models/audit.server.ts";
import { CurveImportError, importCurve, type CurveMeta, type CurveRow } from "#app/models/calibration/curves.server.ts";

/*
 * Editors' changes to curves: adding a file as a new curve or version, and choosing which version
 * of a name is active. Only one version of a name is active at a time; every change is audited.
 */

export type Actor = { id: number; ip?: string | null };

function summary(c: CurveRow) {
  return { name: c.name, version: c.version, active: c.active, rows: c.rowCount, checksum: c.checksum };
}

/**
 * Validates and stores a curve file, makes it the active version of its name and audits it, all
 * in one transaction: a refused file leaves the registry exactly as it was.
 */
export function addCurveVersion(
  db: Db,
  meta: CurveMeta,
  csvText: string,
  actor: Actor,
): { curve: CurveRow; replaced: CurveRow[] } {
  return db.transaction((tx) => {
    const result = importCurve(db, meta, csvText, actor.id);
    if (!result.created) {
      throw new CurveImportError(`This file is already stored as ${meta.displayName} version ${meta.version}.`);
    }
    const replaced = tx
      .select()
      .from(curves)
      .where(and(eq(curves.name, meta.name), eq(curves.active, true), ne(curves.id, result.curveId)))
      .all();
    tx.update(curves)
      .set({ active: false })
      .where(and(eq(curves.name, meta.name), ne(curves.id, result.curveId)))
      .run();
    const curve = tx.select().from(curves).where(eq(curves.id, result.curveId)).get()!;
    audit(tx, {
      actorId: actor.id,
      action: "curve.import",
      entity: "curve",
      entityId: curve.id,
      before: replaced.length ? { active: replaced.map(summary) } : null,
      after: summary(curve),
      ip: actor.ip ?? null,
    });
    return { curve, replaced };
  });
}

/** Makes one version the active one of its name. Returns null when there is no such curve. */
export function activateCurveVersion(db: Db, curveId: number, actor: Actor): { curve: CurveRow; changed: boolean } | null {
  return db.transaction((tx) => {
    const curve = tx.select().from(curves).where(eq(curves.id, curveId)).get();
    if (!curve) return null;
    const before = tx
      .select()
      .from(curves)
      .where(and(eq(curves.name, curve.name), eq(curves.active, true)))
      .all();
    if (curve.active && before.length === 1) return { curve, changed: false };
    tx.update(curves)
      .set({ active: false })
      .where(and(eq(curves.name, curve.name), ne(curves.id, curve.id)))
      .run();
    tx.update(curves).set({ active: true }).where(eq(curves.id, curve.id)).run();
    const after = tx.select().from(curves).where(eq(curves.id, curve.id)).get()!;
    audit(tx, {
      actorId: actor.id,
      action: "curve.activate",
      entity: "curve",
      entityId: curve.id,
      before: { active: before.map(summary) },
      after: summary(after),
      ip: actor.ip ?? null,
    });
    return { curve: after, changed: true };
  });
}

// Saved set definitions: a modeller's named filters (the URL's parameters), to return to.
import type { Db } from "#app/db/client.server.ts";

export type SavedSet = { id: number; name: string; filter: string; updatedAt: number };

export function savedSets(db: Db, userId: number): SavedSet[] {
  return db.$client
    .prepare("select id, name, filter, updated_at as updatedAt from constraint_sets where user_id = ? order by name")
    .all(userId) as SavedSet[];
}

/** Saves (or replaces, by name) the person's set definition. */
export function saveSet(db: Db, userId: number, name: string, filter: string): number {
  const row = db.$client
    .prepare(
      `insert into constraint_sets (user_id, name, filter) values (?, ?, ?)
       on conflict (user_id, name) do update set filter = excluded.filter, updated_at = cast(unixepoch('subsec') * 1000 as integer)
       returning id`,
    )
    .get(userId, name, filter) as { id: number };
  return row.id;
}

/** Deletes one of the person's own sets; another person's set is left alone. */
export function deleteSet(db: Db, userId: number, id: number): boolean {
  return db.$client.prepare("delete from constraint_sets where id = ? and user_id = ?").run(id, userId).changes === 1;
}

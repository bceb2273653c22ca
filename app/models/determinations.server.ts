// Low-level inserts for labs, publications, sites, samples and determinations, shared by the
// seed, the test factories and (later) the submission workflows. A determination is always
// written together with its audit row, in one transaction.

import type Database from "better-sqlite3";
import { getTableColumns, getTableName, type Column } from "drizzle-orm";
import type { SQLiteTable } from "drizzle-orm/sqlite-core";
import type { Db } from "#app/db/client.server.ts";
import { auditLog, determinations, labs, publications, samples, sites } from "#app/db/schema.ts";

export type NewLab = typeof labs.$inferInsert;
export type LabRow = typeof labs.$inferSelect;
export type NewPublication = typeof publications.$inferInsert;
export type PublicationRow = typeof publications.$inferSelect;
export type NewSite = typeof sites.$inferInsert;
export type SiteRow = typeof sites.$inferSelect;
export type NewSample = typeof samples.$inferInsert;
export type SampleRow = typeof samples.$inferSelect;
export type NewDetermination = typeof determinations.$inferInsert;
export type DeterminationRow = typeof determinations.$inferSelect;

export function insertLab(db: Db, values: NewLab): LabRow {
  return insertRow(db, labs, values);
}

export function insertPublication(db: Db, values: NewPublication): PublicationRow {
  return insertRow(db, publications, values);
}

export function insertSite(db: Db, values: NewSite): SiteRow {
  return insertRow(db, sites, values);
}

export function insertSample(db: Db, values: NewSample): SampleRow {
  return insertRow(db, samples, values);
}

/**
 * Stores one determination and its `determination.create` audit row (after = the stored row)
 * in one transaction — a savepoint when the caller already holds one, so it can run inside the
 * caller's larger write. The audit time is the determination's creation time, so back-dated
 * demo data keeps a consistent history.
 */
export function insertDetermination(db: Db, values: NewDetermination, actorId: number | null): DeterminationRow {
  return db.$client.transaction(() => {
    const row = insertRow(db, determinations, values);
    insertRowOnly(db, auditLog, {
      at: row.createdAt,
      actorId,
      action: "determination.create",
      entity: "determination",
      entityId: String(row.id),
      before: null,
      after: auditSnapshot(row),
    });
    return row;
  })();
}

// Drizzle prepares a fresh statement for every query, which dominates the cost of bulk inserts
// (the seed writes tens of thousands of rows). These inserts keep one prepared statement per
// table and column set, and convert values with the schema's own column mappings.
const statementCache = new WeakMap<Database.Database, Map<string, Database.Statement>>();

function prepared(db: Db, text: string): Database.Statement {
  let cache = statementCache.get(db.$client);
  if (!cache) statementCache.set(db.$client, (cache = new Map()));
  let stmt = cache.get(text);
  if (!stmt) cache.set(text, (stmt = db.$client.prepare(text)));
  return stmt;
}

function insertStatement(db: Db, table: SQLiteTable, values: Record<string, unknown>, returning: boolean) {
  const columns = getTableColumns(table) as Record<string, Column>;
  const keys = Object.keys(values).filter((k) => values[k] !== undefined && k in columns);
  const text = `insert into "${getTableName(table)}" (${keys.map((k) => `"${columns[k].name}"`).join(", ")}) values (${keys
    .map(() => "?")
    .join(", ")})${returning ? " returning *" : ""}`;
  const params = keys.map((k) => (values[k] === null ? null : columns[k].mapToDriverValue(values[k])));
  return { stmt: prepared(db, text), params, columns };
}

function insertRow<T extends SQLiteTable>(db: Db, table: T, values: T["$inferInsert"]): T["$inferSelect"] {
  const { stmt, params, columns } = insertStatement(db, table, values as Record<string, unknown>, true);
  const raw = stmt.get(...params) as Record<string, unknown>;
  const row: Record<string, unknown> = {};
  for (const [key, col] of Object.entries(columns)) {
    const v = raw[col.name];
    row[key] = v === null || v === undefined ? null : col.mapFromDriverValue(v);
  }
  return row as T["$inferSelect"];
}

/** Insert without reading the row back (cheaper; for rows nobody needs returned, such as audit entries). */
function insertRowOnly<T extends SQLiteTable>(db: Db, table: T, values: T["$inferInsert"]): void {
  const { stmt, params } = insertStatement(db, table, values as Record<string, unknown>, false);
  stmt.run(...params);
}

/** The row as the audit log keeps it: plain JSON, timestamps as ISO strings. */
export function auditSnapshot(row: DeterminationRow): Record<string, unknown> {
  const out: Record<string, unknown> = {};
  for (const [key, value] of Object.entries(row)) out[key] = value instanceof Date ? value.toISOString() : value;
  return out;
}

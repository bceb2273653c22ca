import type { RunResult } from "better-sqlite3";
import type { BaseSQLiteDatabase } from "drizzle-orm/sqlite-core";
import type { schema } from "#app/db/client.server.ts";
import { auditLog } from "#app/db/schema.ts";

/** The connection (getDb()) or a transaction on it: whatever runs queries. */
export type DbOrTx = BaseSQLiteDatabase<"sync", RunResult, typeof schema>;

export type AuditEntry = {
  actorId: number | null;
  action: string; // e.g. auth.sign_in, user.roles, token.create, determination.update
  entity: string;
  entityId?: string | number | null;
  before?: Record<string, unknown> | null;
  after?: Record<string, unknown> | null;
  ip?: string | null;
};

/** One audit row. Call it inside the same transaction as the change it records. */
export function audit(db: DbOrTx, entry: AuditEntry): void {
  db.insert(auditLog)
    .values({
      actorId: entry.actorId,
      action: entry.action,
      entity: entry.entity,
      entityId: entry.entityId == null ? null : String(entry.entityId),
      before: entry.before ?? null,
      after: entry.after ?? null,
      ip: entry.ip ?? null,
    })
    .run();
}

import crypto from "node:crypto";
import { and, desc, eq, isNull, sql } from "drizzle-orm";
import type { Db } from "#app/db/client.server.ts";
import { apiTokens, users } from "#app/db/schema.ts";
import { audit, type DbOrTx } from "#app/models/audit.server.ts";
import { rolesOf, type SessionUser } from "#app/auth/session.server.ts";
import { sortRoles } from "#app/models/accounts/users.server.ts";

/** Tokens look like `thw_<43 url-safe characters>`; only their SHA-256 is stored. */
const TOKEN_PREFIX = "thw_";
const SHOWN_PREFIX_LENGTH = TOKEN_PREFIX.length + 8;

export function hashToken(token: string): string {
  return crypto.createHash("sha256").update(token, "utf8").digest("hex");
}

export type TokenSummary = {
  id: number;
  label: string;
  prefix: string;
  createdAt: Date;
  lastUsedAt: Date | null;
  revokedAt: Date | null;
};

type Actor = { actorId: number | null; ip?: string | null };

/** Creates a personal token; the plain token is returned once and never stored. */
export function createToken(
  db: DbOrTx,
  userId: number,
  label: string,
  actor: Actor,
): { id: number; token: string; prefix: string } {
  const token = TOKEN_PREFIX + crypto.randomBytes(32).toString("base64url");
  const prefix = token.slice(0, SHOWN_PREFIX_LENGTH);
  const cleanLabel = label.trim().slice(0, 100) || "Unnamed token";
  return db.transaction((tx) => {
    const row = tx
      .insert(apiTokens)
      .values({ userId, label: cleanLabel, tokenHash: hashToken(token), prefix })
      .returning({ id: apiTokens.id })
      .get();
    audit(tx, {
      actorId: actor.actorId,
      action: "token.create",
      entity: "api_token",
      entityId: row.id,
      after: { userId, label: cleanLabel, prefix },
      ip: actor.ip,
    });
    return { id: row.id, token, prefix };
  });
}

export function listTokens(db: DbOrTx, userId: number): TokenSummary[] {
  return db
    .select({
      id: apiTokens.id,
      label: apiTokens.label,
      prefix: apiTokens.prefix,
      createdAt: apiTokens.createdAt,
      lastUsedAt: apiTokens.lastUsedAt,
      revokedAt: apiTokens.revokedAt,
    })
    .from(apiTokens)
    .where(eq(apiTokens.userId, userId))
    .orderBy(desc(apiTokens.createdAt), desc(apiTokens.id))
    .all();
}

/** Revokes one of the person's own tokens. Returns false when there is no such live token. */
export function revokeToken(db: DbOrTx, userId: number, tokenId: number, actor: Actor): boolean {
  return db.transaction((tx) => {
    const row = tx
      .select({ id: apiTokens.id, label: apiTokens.label, prefix: apiTokens.prefix })
      .from(apiTokens)
      .where(and(eq(apiTokens.id, tokenId), eq(apiTokens.userId, userId), isNull(apiTokens.revokedAt)))
      .get();
    if (!row) return false;
    tx.update(apiTokens).set({ revokedAt: new Date() }).where(eq(apiTokens.id, row.id)).run();
    audit(tx, {
      actorId: actor.actorId,
      action: "token.revoke",
      entity: "api_token",
      entityId: row.id,
      before: { userId, label: row.label, prefix: row.prefix },
      ip: actor.ip,
    });
    return true;
  });
}

/** "Last used" is recorded at most this often per token. */
export const LAST_USED_EVERY_MS = 60_000;

/**
 * Records a token's use when the stored time is a minute old or more. A read must never wait for
 * or fail on this write: it does not wait for a busy writer (busy_timeout 0 for this statement),
 * and a busy or read-only database simply skips it until the next use.
 */
function noteUse(db: Db, tokenId: number, lastUsedAt: Date | null, now: Date) {
  if (lastUsedAt && now.getTime() - lastUsedAt.getTime() < LAST_USED_EVERY_MS) return;
  const sqlite = db.$client;
  const saved = sqlite.pragma("busy_timeout", { simple: true }) as number;
  sqlite.pragma("busy_timeout = 0");
  try {
    db.update(apiTokens).set({ lastUsedAt: now }).where(eq(apiTokens.id, tokenId)).run();
  } catch (error) {
    const code = (error as { code?: string }).code ?? "";
    if (!code.startsWith("SQLITE_BUSY") && !code.startsWith("SQLITE_READONLY") && !code.startsWith("SQLITE_LOCKED")) throw error;
  } finally {
    sqlite.pragma(`busy_timeout = ${saved}`);
  }
}

/** The look-up behind every API request, prepared once per connection instead of once per request. */
function prepareTokenLookup(db: Db) {
  return db
    .select({ tokenId: apiTokens.id, lastUsedAt: apiTokens.lastUsedAt, id: users.id, email: users.email, name: users.name })
    .from(apiTokens)
    .innerJoin(users, eq(users.id, apiTokens.userId))
    .where(and(eq(apiTokens.tokenHash, sql.placeholder("hash")), isNull(apiTokens.revokedAt), eq(users.active, true)))
    .prepare();
}
const tokenLookups = new WeakMap<Db, ReturnType<typeof prepareTokenLookup>>();

/**
 * The person a bearer token stands for: the token must exist, not be revoked, and belong to an
 * active person. Notes the time of use (at most once a minute, never delaying the answer).
 */
export function userForToken(db: Db, token: string): (SessionUser & { tokenId: number }) | null {
  if (!token.startsWith(TOKEN_PREFIX) || token.length > 200) return null;
  let lookup = tokenLookups.get(db);
  if (!lookup) tokenLookups.set(db, (lookup = prepareTokenLookup(db)));
  const row = lookup.get({ hash: hashToken(token) });
  if (!row) return null;
  noteUse(db, row.tokenId, row.lastUsedAt, new Date());
  return { id: row.id, email: row.email, name: row.name, roles: sortRoles(rolesOf(row.id)), tokenId: row.tokenId };
}

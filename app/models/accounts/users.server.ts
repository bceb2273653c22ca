import { and, eq, isNull, lt } from "drizzle-orm";
import type { Db } from "#app/db/client.server.ts";
import { apiTokens, ROLES, sessions, userRoles, users, type Role } from "#app/db/schema.ts";
import { audit, type DbOrTx } from "#app/models/audit.server.ts";

export type Person = {
  id: number;
  email: string;
  name: string;
  active: boolean;
  roles: Role[];
  createdAt: Date;
  lastSignInAt: Date | null;
};

/** Addresses are compared and stored trimmed and lower-cased. */
export function normalizeEmail(email: string): string {
  return email.trim().toLowerCase();
}

export function isRole(value: string): value is Role {
  return (ROLES as readonly string[]).includes(value);
}

/** Roles in their canonical order, without repeats. */
export function sortRoles(roles: Iterable<string>): Role[] {
  const set = new Set(roles);
  return ROLES.filter((r) => set.has(r));
}

export function findUserByEmail(db: DbOrTx, email: string) {
  return (
    db
      .select({ id: users.id, email: users.email, name: users.name, active: users.active })
      .from(users)
      .where(eq(users.email, normalizeEmail(email)))
      .get() ?? null
  );
}

export function findActiveUserByEmail(db: DbOrTx, email: string) {
  const user = findUserByEmail(db, email);
  return user && user.active ? user : null;
}

function rolesOfUser(db: DbOrTx, userId: number): Role[] {
  return sortRoles(
    db
      .select({ role: userRoles.role })
      .from(userRoles)
      .where(eq(userRoles.userId, userId))
      .all()
      .map((r) => r.role),
  );
}

function replaceRoles(db: DbOrTx, userId: number, roles: Role[]) {
  db.delete(userRoles).where(eq(userRoles.userId, userId)).run();
  if (roles.length > 0)
    db.insert(userRoles)
      .values(roles.map((role) => ({ userId, role })))
      .run();
}

/**
 * Creates a person with exactly these roles, or — when the address is already known — sets
 * their roles (and name, when given) to these. Idempotent on the e-mail address; returns the id.
 * Records nothing in the audit log: callers acting for someone use inviteUser().
 */
export function createUser(db: DbOrTx, input: { email: string; name?: string; roles: readonly Role[] }): number {
  const email = normalizeEmail(input.email);
  const roles = sortRoles(input.roles);
  return db.transaction((tx) => {
    const existing = tx.select({ id: users.id }).from(users).where(eq(users.email, email)).get();
    if (existing) {
      if (input.name?.trim()) tx.update(users).set({ name: input.name.trim() }).where(eq(users.id, existing.id)).run();
      replaceRoles(tx, existing.id, roles);
      return existing.id;
    }
    const name = input.name?.trim() || defaultName(email);
    const row = tx.insert(users).values({ email, name }).returning({ id: users.id }).get();
    replaceRoles(tx, row.id, roles);
    return row.id;
  });
}

function defaultName(email: string): string {
  return email
    .split("@")[0]!
    .replace(/[._-]+/g, " ")
    .replace(/\b\w/g, (c) => c.toUpperCase());
}

/** Everyone with their roles, active people first; one query. */
export function listPeople(db: Db): Person[] {
  const rows = db.$client
    .prepare(
      `select u.id, u.email, u.name, u.active, u.created_at as createdAt, u.last_sign_in_at as lastSignInAt,
              group_concat(r.role) as roles
         from users u left join user_roles r on r.user_id = u.id
        group by u.id
        order by u.active desc, u.name collate nocase, u.email`,
    )
    .all() as {
    id: number;
    email: string;
    name: string;
    active: number;
    createdAt: number;
    lastSignInAt: number | null;
    roles: string | null;
  }[];
  return rows.map((r) => ({
    id: r.id,
    email: r.email,
    name: r.name,
    active: r.active === 1,
    roles: sortRoles(r.roles ? r.roles.split(",") : []),
    createdAt: new Date(r.createdAt),
    lastSignInAt: r.lastSignInAt == null ? null : new Date(r.lastSignInAt),
  }));
}

export function getPerson(db: DbOrTx, userId: number): Person | null {
  const row = db.select().from(users).where(eq(users.id, userId)).get();
  if (!row) return null;
  return {
    id: row.id,
    email: row.email,
    name: row.name,
    active: row.active,
    roles: rolesOfUser(db, row.id),
    createdAt: row.createdAt,
    lastSignInAt: row.lastSignInAt,
  };
}

type Actor = { actorId: number | null; ip?: string | null };

/** An editor (or the create-user command) invites a new person; audited. */
export function inviteUser(db: DbOrTx, input: { email: string; name: string; roles: readonly Role[] }, actor: Actor): number {
  return db.transaction((tx) => {
    const id = createUser(tx, input);
    audit(tx, {
      actorId: actor.actorId,
      action: "user.invite",
      entity: "user",
      entityId: id,
      after: { email: normalizeEmail(input.email), name: input.name, roles: sortRoles(input.roles) },
      ip: actor.ip,
    });
    return id;
  });
}

/** Sets a person's roles to exactly these; audited with before and after. Returns false when unchanged. */
export function setRoles(db: DbOrTx, userId: number, roles: readonly Role[], actor: Actor): boolean {
  const after = sortRoles(roles);
  return db.transaction((tx) => {
    const before = rolesOfUser(tx, userId);
    if (before.join(",") === after.join(",")) return false;
    replaceRoles(tx, userId, after);
    audit(tx, {
      actorId: actor.actorId,
      action: "user.roles",
      entity: "user",
      entityId: userId,
      before: { roles: before },
      after: { roles: after },
      ip: actor.ip,
    });
    return true;
  });
}

/**
 * Deactivating ends the person's sessions and revokes their API tokens at once (revoked, not
 * suspended: reactivating brings no old token back). Reactivating restores nothing but the right
 * to sign in.
 */
export function setActive(db: DbOrTx, userId: number, active: boolean, actor: Actor): boolean {
  return db.transaction((tx) => {
    const row = tx.select({ active: users.active }).from(users).where(eq(users.id, userId)).get();
    if (!row || row.active === active) return false;
    tx.update(users).set({ active }).where(eq(users.id, userId)).run();
    let sessionsEnded = 0;
    let tokensRevoked = 0;
    if (!active) {
      sessionsEnded = tx.delete(sessions).where(eq(sessions.userId, userId)).run().changes;
      tokensRevoked = tx
        .update(apiTokens)
        .set({ revokedAt: new Date() })
        .where(and(eq(apiTokens.userId, userId), isNull(apiTokens.revokedAt)))
        .run().changes;
    }
    audit(tx, {
      actorId: actor.actorId,
      action: active ? "user.reactivate" : "user.deactivate",
      entity: "user",
      entityId: userId,
      before: { active: row.active },
      after: active ? { active } : { active, sessionsEnded, tokensRevoked },
      ip: actor.ip,
    });
    return true;
  });
}

export function recordSignIn(db: DbOrTx, userId: number, details: { method: "code" | "link"; ip: string }) {
  db.transaction((tx) => {
    tx.update(users).set({ lastSignInAt: new Date() }).where(eq(users.id, userId)).run();
    // Housekeeping: the person's expired sessions go when they next sign in.
    tx.delete(sessions)
      .where(and(eq(sessions.userId, userId), lt(sessions.expiresAt, new Date())))
      .run();
    audit(tx, {
      actorId: userId,
      action: "auth.sign_in",
      entity: "user",
      entityId: userId,
      after: { method: details.method },
      ip: details.ip,
    });
  });
}

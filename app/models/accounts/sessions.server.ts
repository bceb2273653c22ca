import crypto from "node:crypto";
import { and, desc, eq, gt, ne } from "drizzle-orm";
import { sessions } from "#app/db/schema.ts";
import { audit, type DbOrTx } from "#app/models/audit.server.ts";

/**
 * Pages name a session by a hash of its id, never the id itself (the id is what the cookie
 * proves; it should not travel in HTML).
 */
export function sessionHandle(sessionId: string): string {
  return crypto.createHash("sha256").update(sessionId).digest("hex").slice(0, 20);
}

export type SessionSummary = {
  handle: string;
  createdAt: Date;
  expiresAt: Date;
  userAgent: string | null;
  ip: string | null;
  current: boolean;
};

export function listActiveSessions(db: DbOrTx, userId: number, currentSessionId?: string): SessionSummary[] {
  return db
    .select()
    .from(sessions)
    .where(and(eq(sessions.userId, userId), gt(sessions.expiresAt, new Date())))
    .orderBy(desc(sessions.createdAt))
    .all()
    .map((s) => ({
      handle: sessionHandle(s.id),
      createdAt: s.createdAt,
      expiresAt: s.expiresAt,
      userAgent: s.userAgent,
      ip: s.ip,
      current: s.id === currentSessionId,
    }));
}

type Actor = { actorId: number | null; ip?: string | null };

/** Ends one of the person's sessions; returns whether it was the current one, or null if not found. */
export function revokeSession(db: DbOrTx, userId: number, handle: string, currentSessionId: string | undefined, actor: Actor) {
  return db.transaction((tx) => {
    const target = tx
      .select({ id: sessions.id })
      .from(sessions)
      .where(eq(sessions.userId, userId))
      .all()
      .find((s) => sessionHandle(s.id) === handle);
    if (!target) return null;
    tx.delete(sessions).where(eq(sessions.id, target.id)).run();
    audit(tx, {
      actorId: actor.actorId,
      action: "session.revoke",
      entity: "user",
      entityId: userId,
      after: { session: handle },
      ip: actor.ip,
    });
    return { wasCurrent: target.id === currentSessionId };
  });
}

/** Ends every session of the person except this one; returns how many ended. */
export function revokeOtherSessions(db: DbOrTx, userId: number, currentSessionId: string, actor: Actor): number {
  return db.transaction((tx) => {
    const ended = tx
      .delete(sessions)
      .where(and(eq(sessions.userId, userId), ne(sessions.id, currentSessionId)))
      .run().changes;
    if (ended > 0) {
      audit(tx, {
        actorId: actor.actorId,
        action: "session.revoke_others",
        entity: "user",
        entityId: userId,
        after: { ended },
        ip: actor.ip,
      });
    }
    return ended;
  });
}

/** A short description of a browser from its User-Agent, for people telling their sessions apart. */
export function describeUserAgent(ua: string | null): string {
  if (!ua) return "Unknown browser";
  const browser = /Edg\//.test(ua)
    ? "Edge"
    : /Firefox\//.test(ua)
      ? "Firefox"
      : /Chrome\//.test(ua) || /HeadlessChrome/.test(ua)
        ? "Chrome or Chromium"
        : /Safari\//.test(ua)
          ? "Safari"
          : /curl|node|undici/i.test(ua)
            ? "Command-line client"
            : "Browser";
  const system = /Windows/.test(ua)
    ? "Windows"
    : /Mac OS X|Macintosh/.test(ua)
      ? "macOS"
      : /Android/.test(ua)
        ? "Android"
        : /iPhone|iPad/.test(ua)
          ? "iOS"
          : /Linux/.test(ua)
            ? "Linux"
            : null;
  return system ? `${browser} on ${system}` : browser;
}

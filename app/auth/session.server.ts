import crypto from "node:crypto";
import { createCookie, redirect } from "react-router";
import { and, eq, gt } from "drizzle-orm";
import { getDb } from "#app/db/client.server.ts";
import { writeWhenFree } from "#app/db/write-when-free.server.ts";
import { sessions, userRoles, users, type Role } from "#app/db/schema.ts";
import { env } from "#app/utils/env.server.ts";

export const SESSION_TTL_MS = 30 * 24 * 60 * 60 * 1000;

export type SessionUser = {
  id: number;
  email: string;
  name: string;
  roles: Role[];
  sessionId?: string;
};

/** The cookie holds only a session id; the sessions table says whether it is still valid. */
export const sessionCookie = createCookie("thawline_session", {
  httpOnly: true,
  sameSite: "lax",
  path: "/",
  get secure() {
    return env().SECURE_COOKIES ?? env().NODE_ENV === "production";
  },
  secrets: [env().SESSION_SECRET],
  maxAge: SESSION_TTL_MS / 1000,
});

export async function readSessionId(request: Request): Promise<string | null> {
  const value = await sessionCookie.parse(request.headers.get("Cookie"));
  return typeof value === "string" && value.length > 0 ? value : null;
}

export function rolesOf(userId: number): Role[] {
  return getDb()
    .select({ role: userRoles.role })
    .from(userRoles)
    .where(eq(userRoles.userId, userId))
    .all()
    .map((r) => r.role);
}

export async function getOptionalUser(request: Request): Promise<SessionUser | null> {
  const sessionId = await readSessionId(request);
  if (!sessionId) return null;
  const row = getDb()
    .select({ id: users.id, email: users.email, name: users.name, sessionId: sessions.id })
    .from(sessions)
    .innerJoin(users, eq(users.id, sessions.userId))
    .where(and(eq(sessions.id, sessionId), gt(sessions.expiresAt, new Date()), eq(users.active, true)))
    .get();
  if (!row) return null;
  return { ...row, roles: rolesOf(row.id) };
}

function signInRedirect(request: Request): never {
  const url = new URL(request.url);
  const redirectTo = `${url.pathname}${url.search}`;
  throw redirect(`/sign-in?redirectTo=${encodeURIComponent(redirectTo)}`);
}

/** First line of every loader and action that needs a signed-in person. */
export async function requireUser(request: Request): Promise<SessionUser> {
  const user = await getOptionalUser(request);
  if (!user) signInRedirect(request);
  return user;
}

export function forbidden(message = "You do not have access to this page."): never {
  throw new Response(message, { status: 403, statusText: "Forbidden" });
}

/** Signed-out → redirect to sign-in; signed-in without any of the roles → 403. */
export async function requireRole(request: Request, ...allowed: Role[]): Promise<SessionUser> {
  const user = await requireUser(request);
  if (!allowed.some((r) => user.roles.includes(r))) forbidden();
  return user;
}

/** Stores a new session. Waits for a busy write lock without holding up the thread (writeWhenFree). */
export async function createSession(userId: number, request: Request): Promise<{ id: string; cookie: string }> {
  const id = crypto.randomBytes(32).toString("base64url");
  const db = getDb();
  await writeWhenFree(db, () =>
    db
      .insert(sessions)
      .values({
        id,
        userId,
        expiresAt: new Date(Date.now() + SESSION_TTL_MS),
        userAgent: request.headers.get("User-Agent")?.slice(0, 300) ?? null,
        ip: clientAddress(request),
      })
      .run(),
  );
  return { id, cookie: await sessionCookie.serialize(id) };
}

/** Ends this browser's session (as createSession, without holding up the thread while the lock is busy). */
export async function destroySession(request: Request): Promise<string> {
  const id = await readSessionId(request);
  const db = getDb();
  if (id) await writeWhenFree(db, () => db.delete(sessions).where(eq(sessions.id, id)).run());
  return sessionCookie.serialize("", { maxAge: 0 });
}

export function clientAddress(request: Request): string {
  // Set by server.js from the socket (never trusted from the client); absent under the dev server.
  return request.headers.get("X-Thawline-Client") ?? "local";
}

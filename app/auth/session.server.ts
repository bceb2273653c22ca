import crypto from "node:crypto";
import { createCookie, redirect } from "react-router";
import { eq } from "drizzle-orm";
import type BetterSqlite3 from "better-sqlite3";
import { getDb } from "#app/db/client.server.ts";
import { writeWhenFree } from "#app/db/write-when-free.server.ts";
import { sessions, type Role } from "#app/db/schema.ts";
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

/** The two lookups every signed-in request makes, prepared once per connection (no query building per request). */
const statements = new WeakMap<object, { user: Statement; roles: Statement }>();
type Statement = BetterSqlite3.Statement<unknown[], unknown>;

function sessionStatements() {
  const sqlite = getDb().$client;
  let prepared = statements.get(sqlite);
  if (!prepared) {
    prepared = {
      user: sqlite.prepare(
        `select u.id, u.email, u.name, s.id as sessionId from sessions s join users u on u.id = s.user_id
         where s.id = ? and s.expires_at > ? and u.active = 1`,
      ),
      roles: sqlite.prepare("select role from user_roles where user_id = ?").pluck(),
    };
    statements.set(sqlite, prepared);
  }
  return prepared;
}

export function rolesOf(userId: number): Role[] {
  return sessionStatements().roles.all(userId) as Role[];
}

/** The id of the person whose open session this is, or null when it has ended (signed out, expired, deactivated). */
export function sessionStillFor(sessionId: string): number | null {
  const row = sessionStatements().user.get(sessionId, Date.now()) as { id: number } | undefined;
  return row?.id ?? null;
}

async function lookUpUser(request: Request): Promise<SessionUser | null> {
  const sessionId = await readSessionId(request);
  if (!sessionId) return null;
  const row = sessionStatements().user.get(sessionId, Date.now()) as Omit<SessionUser, "roles"> | undefined;
  if (!row) return null;
  return { ...row, roles: rolesOf(row.id) };
}

/*
 * A page's loaders (root, area layout, page) each check the session on the same request. For a
 * read (GET or HEAD) that is one lookup, shared; a write looks again at every call, since its
 * action may have changed the session or the person.
 */
const lookedUp = new WeakMap<Request, Promise<SessionUser | null>>();

export async function getOptionalUser(request: Request): Promise<SessionUser | null> {
  if (request.method !== "GET" && request.method !== "HEAD") return lookUpUser(request);
  let user = lookedUp.get(request);
  if (!user) {
    user = lookUpUser(request);
    lookedUp.set(request, user);
  }
  const found = await user;
  // Each caller gets its own copy: a caller that changes what it was given changes nothing for the next.
  return found && { ...found, roles: [...found.roles] };
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

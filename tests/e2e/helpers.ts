import crypto from "node:crypto";
import Database from "better-sqlite3";
import type { BrowserContext, Page } from "playwright-core";
import { createCookie } from "react-router";
import { inject } from "vitest";

type OutboxMessage = { id: string; to: string[] | string; subject: string; text?: string; html?: string; created_at?: string };

/** Messages the mail fake has accepted for one address, newest first. */
export async function messagesFor(email: string): Promise<OutboxMessage[]> {
  const res = await fetch(`${inject("mailFakeUrl")}/emails`);
  if (!res.ok) throw new Error(`The mail fake answered ${res.status}`);
  const body = (await res.json()) as { data: OutboxMessage[] } | OutboxMessage[];
  const all = Array.isArray(body) ? body : body.data;
  return all.filter((m) => (Array.isArray(m.to) ? m.to : [m.to]).includes(email));
}

/** Waits for a new message to arrive for an address (polls the fake; no fixed sleeps). */
export async function waitForMessage(email: string, after: number): Promise<OutboxMessage> {
  const deadline = Date.now() + 15_000;
  while (Date.now() < deadline) {
    const list = await messagesFor(email);
    if (list.length > after) return list[0]!;
    await new Promise((r) => setTimeout(r, 100));
  }
  throw new Error(`No new message for ${email}`);
}

export function codeFrom(message: OutboxMessage): string {
  // The sign-in message puts the code on its own line (see app/mail/templates.server.ts).
  const match = /sign-in code:\s*([A-Z0-9]{6})\b/.exec(message.text ?? "");
  if (!match) throw new Error(`No code in message "${message.subject}"`);
  return match[1]!;
}

/**
 * Signs a person in without the code flow — for every browser test except the sign-in tests, which
 * keep the real form. Writes a session row for the (active) person with this address into the app's
 * database, as the sign-in would, and sets its signed cookie on the page's browser context. The page
 * stays where it is: `goto` next.
 */
export async function signInAs(target: Page | BrowserContext, email: string): Promise<{ userId: number; sessionId: string }> {
  const context = "context" in target ? target.context() : target;
  const db = new Database(inject("databaseFile"), { fileMustExist: true });
  try {
    db.pragma("busy_timeout = 5000");
    const user = db.prepare("SELECT id FROM users WHERE lower(email) = lower(?) AND active = 1").get(email) as
      { id: number } | undefined;
    if (!user) throw new Error(`No active person ${email} in the e2e database`);
    const sessionId = crypto.randomBytes(32).toString("base64url");
    db.prepare("INSERT INTO sessions (id, user_id, expires_at, user_agent, ip) VALUES (?, ?, ?, ?, ?)").run(
      sessionId,
      user.id,
      Date.now() + 24 * 60 * 60 * 1000,
      "e2e sign-in fixture",
      "127.0.0.1",
    );
    const cookie = createCookie(SESSION_COOKIE, { secrets: [inject("sessionSecret")], path: "/" });
    const value = (await cookie.serialize(sessionId)).split(";")[0]!.slice(SESSION_COOKIE.length + 1);
    await context.addCookies([{ name: SESSION_COOKIE, value, url: inject("baseUrl"), httpOnly: true, sameSite: "Lax" }]);
    return { userId: user.id, sessionId };
  } finally {
    db.close();
  }
}

/** Waits until React has hydrated the page (root.tsx marks the body), so typing and clicks reach its handlers. */
export async function waitForHydration(page: Page) {
  await page.locator("body[data-hydrated]").waitFor({ state: "attached" });
}

/** The app's session cookie (app/auth/session.server.ts). */
const SESSION_COOKIE = "thawline_session";

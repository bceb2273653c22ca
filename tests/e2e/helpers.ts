import { inject } from "vitest";
import type { Page } from "playwright-core";

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

/** Signs in through the real form: address → code from the mail fake → signed in. */
export async function signIn(page: Page, email: string) {
  const before = (await messagesFor(email)).length;
  await page.goto(`${inject("baseUrl")}/sign-in`);
  await page.fill('input[name="email"]', email);
  await page.click('button[type="submit"]');
  const message = await waitForMessage(email, before);
  await page.waitForSelector('input[name="code"]');
  await page.fill('input[name="code"]', codeFrom(message));
  await Promise.all([page.waitForURL((url) => !url.pathname.startsWith("/sign-in")), page.click('button[type="submit"]')]);
}

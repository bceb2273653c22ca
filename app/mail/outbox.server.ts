import { env } from "#app/utils/env.server.ts";
import { readMessageText } from "#app/mail/templates.server.ts";

export type OutboxEntry = {
  id: string;
  createdAt: string;
  to: string[];
  subject: string;
  text: string | null;
  html: string | null;
  code: string | null;
  links: string[];
};

/**
 * The messages held by the local mail fake, newest first, read through its own API at
 * RESEND_BASE_URL — so the page shows exactly where the app's mail went.
 */
export async function readFakeOutbox(limit = 50): Promise<{ entries: OutboxEntry[]; problem: string | null }> {
  const base = process.env.RESEND_BASE_URL;
  if (!base) return { entries: [], problem: "RESEND_BASE_URL is not set, so no mail fake is in use." };
  let body: { data?: unknown };
  try {
    const response = await fetch(`${base.replace(/\/$/, "")}/emails`, {
      headers: { Authorization: `Bearer ${env().RESEND_API_KEY}` },
      signal: AbortSignal.timeout(5000),
    });
    if (!response.ok) return { entries: [], problem: `The mail fake at ${base} answered ${response.status}.` };
    body = (await response.json()) as { data?: unknown };
  } catch {
    return { entries: [], problem: `The mail fake at ${base} is not answering. Start it with: npm run mail-fake` };
  }
  const list = Array.isArray(body.data) ? (body.data as Record<string, unknown>[]) : [];
  const entries = list.slice(0, limit).map((m) => {
    const text = typeof m.text === "string" ? m.text : null;
    const { code, links } = readMessageText(text ?? "");
    return {
      id: String(m.id),
      createdAt: String(m.created_at ?? ""),
      to: Array.isArray(m.to) ? m.to.map(String) : [String(m.to ?? "")],
      subject: String(m.subject ?? ""),
      text,
      html: typeof m.html === "string" ? m.html : null,
      code,
      links,
    };
  });
  return { entries, problem: null };
}

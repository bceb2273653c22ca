/*
 * Thawline's messages. Each has a plain-text and an HTML version saying the same thing; the
 * text version is the one to read first, so it carries the code on a line of its own.
 */
export type Message = { subject: string; text: string; html: string };

const SIGN_OFF = "Thawline — a registry of ice-free dates";

function escapeHtml(value: string): string {
  return value.replace(/&/g, "&amp;").replace(/</g, "&lt;").replace(/>/g, "&gt;").replace(/"/g, "&quot;").replace(/'/g, "&#39;");
}

function layout(title: string, body: string): string {
  return `<!doctype html>
<html lang="en"><head><meta charset="utf-8"><title>${escapeHtml(title)}</title></head>
<body style="margin:0;padding:24px;background:#fbfaf7;color:#1c2a36;font-family:Georgia,'Source Serif 4',serif;font-size:17px;line-height:1.5">
<div style="max-width:560px;margin:0 auto;background:#ffffff;border:1px solid #d9dee2;border-radius:6px;padding:28px">
<p style="margin:0 0 20px;font-size:20px;font-weight:600;color:#173a56">Thawline</p>
${body}
<p style="margin:28px 0 0;font-size:14px;color:#5b6975">${escapeHtml(SIGN_OFF)}</p>
</div></body></html>`;
}

const CODE_LINE = "Your sign-in code:";

export function signInMessage(input: { code: string; link: string; minutes: number }): Message {
  const { code, link, minutes } = input;
  const subject = `Your Thawline sign-in code: ${code}`;
  const text = [
    "Hello,",
    "",
    "Someone asked to sign in to Thawline with this address. If it was you:",
    "",
    `${CODE_LINE} ${code}`,
    "",
    "Type the code on the sign-in page, or open this link in the same browser:",
    link,
    "",
    `The code and the link work for ${minutes} minutes, and only once.`,
    "If you did not ask to sign in, ignore this message: nobody can sign in without it.",
    "",
    `— ${SIGN_OFF}`,
  ].join("\n");
  const html = layout(
    subject,
    `<p style="margin:0 0 16px">Someone asked to sign in to Thawline with this address. If it was you, type this code on the sign-in page:</p>
<p style="margin:0 0 20px;font-size:30px;font-weight:700;letter-spacing:0.2em;font-family:ui-monospace,Menlo,monospace;color:#0f273b">${escapeHtml(code)}</p>
<p style="margin:0 0 20px">or open the link in the same browser:</p>
<p style="margin:0 0 20px"><a href="${escapeHtml(link)}" style="display:inline-block;background:#0f6f78;color:#ffffff;text-decoration:none;padding:8px 18px;border-radius:4px;font-weight:600">Sign in to Thawline</a></p>
<p style="margin:0 0 8px;font-size:15px;color:#5b6975">The code and the link work for ${minutes} minutes, and only once. If you did not ask to sign in, ignore this message: nobody can sign in without it.</p>`,
  );
  return { subject, text, html };
}

const ROLE_WORDS: Record<string, string> = {
  contributor: "contributor (submit determinations and answer reviewers' questions)",
  reviewer: "reviewer (grade determinations in the review queue)",
  modeller: "modeller (save constraint sets, score model runs, use the API)",
  editor: "editor (invite people, import curves, publish releases)",
};

export function invitationMessage(input: {
  name: string;
  invitedBy: string;
  roles: readonly string[];
  signInUrl: string;
}): Message {
  const roles = input.roles.map((r) => ROLE_WORDS[r] ?? r);
  const subject = "You are invited to Thawline";
  const text = [
    `Hello ${input.name},`,
    "",
    `${input.invitedBy} has invited you to Thawline, the shared registry of dates that constrain past ice sheets.`,
    roles.length ? `Your roles: ${roles.join("; ")}.` : "No roles have been given to you yet.",
    "",
    "There is no password. To sign in, open this page and ask for a code; it is sent to this address:",
    input.signInUrl,
    "",
    `— ${SIGN_OFF}`,
  ].join("\n");
  const html = layout(
    subject,
    `<p style="margin:0 0 16px">Hello ${escapeHtml(input.name)},</p>
<p style="margin:0 0 16px">${escapeHtml(input.invitedBy)} has invited you to Thawline, the shared registry of dates that constrain past ice sheets.</p>
${
  roles.length
    ? `<p style="margin:0 0 8px">Your roles:</p><ul style="margin:0 0 16px">${roles.map((r) => `<li>${escapeHtml(r)}</li>`).join("")}</ul>`
    : `<p style="margin:0 0 16px">No roles have been given to you yet.</p>`
}
<p style="margin:0 0 20px">There is no password. To sign in, open the sign-in page and ask for a code; it is sent to this address.</p>
<p style="margin:0 0 8px"><a href="${escapeHtml(input.signInUrl)}" style="display:inline-block;background:#0f6f78;color:#ffffff;text-decoration:none;padding:8px 18px;border-radius:4px;font-weight:600">Go to the sign-in page</a></p>`,
  );
  return { subject, text, html };
}

/** The code and links in a message's text version (for the dev outbox page and tests). */
export function readMessageText(text: string): { code: string | null; links: string[] } {
  const code =
    text
      .split("\n")
      .find((l) => l.startsWith(CODE_LINE))
      ?.slice(CODE_LINE.length)
      .trim() ?? null;
  const links = text.match(/https?:\/\/[^\s<>"]+/g) ?? [];
  return { code: code || null, links };
}

// Messages of the review workflow: a reviewer's question, and the digest a contributor gets when
// a batch of their determinations has been reviewed (one per batch, never one per date).
import type { Message } from "#app/mail/templates.server.ts";

function escapeHtml(value: string): string {
  return value.replace(/&/g, "&amp;").replace(/</g, "&lt;").replace(/>/g, "&gt;").replace(/"/g, "&quot;");
}

function wrap(title: string, paragraphs: string[]): string {
  return `<!doctype html><html lang="en"><head><meta charset="utf-8"><title>${escapeHtml(title)}</title></head>
<body style="margin:0;padding:24px;background:#fbfaf7;color:#1c2a36;font-family:Georgia,'Source Serif 4',serif;font-size:17px;line-height:1.5">
<div style="max-width:560px;margin:0 auto;background:#fff;border:1px solid #d9dee2;border-radius:6px;padding:28px">
<p style="margin:0 0 20px;font-size:20px;font-weight:600;color:#173a56">Thawline</p>
${paragraphs.join("\n")}
<p style="margin:28px 0 0;font-size:14px;color:#5b6975">Thawline — a registry of ice-free dates</p>
</div></body></html>`;
}

export function reviewQuestionMessage(input: { labCode: string; question: string; answerUrl: string }): Message {
  const text = [
    `A reviewer has a question about ${input.labCode}:`,
    "",
    input.question,
    "",
    `Answer it (and edit the determination if needed) in My submissions: ${input.answerUrl}`,
    "",
    "Thawline — a registry of ice-free dates",
  ].join("\n");
  const html = wrap("A question about your determination", [
    `<p>A reviewer has a question about <strong>${escapeHtml(input.labCode)}</strong>:</p>`,
    `<blockquote style="margin:0 0 16px;padding-left:12px;border-left:3px solid #8bbad6">${escapeHtml(input.question)}</blockquote>`,
    `<p><a href="${escapeHtml(input.answerUrl)}">Answer it in My submissions</a></p>`,
  ]);
  return { subject: `A question about ${input.labCode}`, text, html };
}

export function reviewDigestMessage(input: {
  batchLabel: string;
  items: { labCode: string; grade: number; gradeWord: string }[];
  submissionsUrl: string;
}): Message {
  const n = input.items.length;
  const lines = input.items.map((i) => `  ${i.labCode}: ${i.grade} ${i.gradeWord}`);
  const text = [
    `${n} of your determinations (${input.batchLabel}) ${n === 1 ? "has" : "have"} been reviewed:`,
    ...lines,
    "",
    `See the grades, flags and comments in My submissions: ${input.submissionsUrl}`,
    "",
    "Thawline — a registry of ice-free dates",
  ].join("\n");
  const html = wrap("Your determinations were reviewed", [
    `<p>${n} of your determinations (${escapeHtml(input.batchLabel)}) ${n === 1 ? "has" : "have"} been reviewed:</p>`,
    `<ul>${input.items.map((i) => `<li>${escapeHtml(i.labCode)}: ${i.grade} ${escapeHtml(i.gradeWord)}</li>`).join("")}</ul>`,
    `<p><a href="${escapeHtml(input.submissionsUrl)}">See them in My submissions</a></p>`,
  ]);
  return { subject: `Reviewed: ${n} determination${n === 1 ? "" : "s"} (${input.batchLabel})`, text, html };
}

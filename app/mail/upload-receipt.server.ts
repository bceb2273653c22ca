// The receipt a contributor gets after committing an upload.
import type { Message } from "#app/mail/templates.server.ts";

function escapeHtml(value: string): string {
  return value.replace(/&/g, "&amp;").replace(/</g, "&lt;").replace(/>/g, "&gt;").replace(/"/g, "&quot;");
}

export function uploadReceiptMessage(input: {
  fileName: string;
  committed: number;
  skipped: number;
  submissionsUrl: string;
  uploadUrl: string;
}): Message {
  const { fileName, committed, skipped, submissionsUrl, uploadUrl } = input;
  const dets = `${committed} determination${committed === 1 ? "" : "s"}`;
  const skippedLine =
    skipped > 0 ? `${skipped} row${skipped === 1 ? " was" : "s were"} left out because of errors.` : "Every row was committed.";
  const text = [
    `Your upload “${fileName}” is in the registry: ${dets} submitted for review.`,
    skippedLine,
    "",
    `Follow them in My submissions: ${submissionsUrl}`,
    `The upload, its errors and an undo button (until a reviewer starts): ${uploadUrl}`,
    "",
    "Thawline — a registry of ice-free dates",
  ].join("\n");
  const html = `<!doctype html><html lang="en"><head><meta charset="utf-8"><title>Upload committed</title></head>
<body style="margin:0;padding:24px;background:#fbfaf7;color:#1c2a36;font-family:Georgia,'Source Serif 4',serif;font-size:17px;line-height:1.5">
<div style="max-width:560px;margin:0 auto;background:#fff;border:1px solid #d9dee2;border-radius:6px;padding:28px">
<p style="margin:0 0 20px;font-size:20px;font-weight:600;color:#173a56">Thawline</p>
<p>Your upload “${escapeHtml(fileName)}” is in the registry: <strong>${dets}</strong> submitted for review.</p>
<p>${escapeHtml(skippedLine)}</p>
<p><a href="${escapeHtml(submissionsUrl)}">Follow them in My submissions</a> · <a href="${escapeHtml(uploadUrl)}">See the upload</a></p>
<p style="margin:28px 0 0;font-size:14px;color:#5b6975">Thawline — a registry of ice-free dates</p>
</div></body></html>`;
  return { subject: `Upload committed: ${dets}`, text, html };
}

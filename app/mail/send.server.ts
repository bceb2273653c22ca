import { Resend } from "resend";
import { env, usesMailFake } from "#app/utils/env.server.ts";
import type { Message } from "#app/mail/templates.server.ts";

export class MailError extends Error {}

/**
 * The one way Thawline sends mail. The Resend SDK takes its base URL from RESEND_BASE_URL when it
 * is constructed, so the client is built per message: in development, demo and tests that
 * variable points at the local fake (seed/mail-fake.ts), which speaks the same HTTP API.
 */
export async function sendEmail(input: Message & { to: string; tags?: { name: string; value: string }[] }) {
  const { RESEND_API_KEY, MAIL_FROM } = env();
  if (usesMailFake() && !process.env.RESEND_BASE_URL) {
    throw new MailError(
      "Mail goes to the local mail fake, but RESEND_BASE_URL is not set. Start the fake (npm run mail-fake) and set RESEND_BASE_URL=http://127.0.0.1:3025.",
    );
  }
  const resend = new Resend(RESEND_API_KEY);
  const { data, error } = await resend.emails.send({
    from: MAIL_FROM,
    to: [input.to],
    subject: input.subject,
    text: input.text,
    html: input.html,
    tags: input.tags,
  });
  if (error || !data) {
    const where = usesMailFake() ? ` (local mail fake at ${process.env.RESEND_BASE_URL}; is it running?)` : "";
    throw new MailError(`The message could not be sent: ${error?.message ?? "no answer"}${where}`);
  }
  return { id: data.id };
}

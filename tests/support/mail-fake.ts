// The mail fake for integration test files that send mail through the app's sendEmail().
import fs from "node:fs";
import path from "node:path";
import { afterAll, beforeAll } from "vitest";
import { startMailFake } from "#seed/mail-fake.ts";

/**
 * Starts the mail fake before the file's tests, with an outbox folder of its own, and points the
 * app's mail at it; stops it and removes the folder after them. Read `.url` inside a test.
 */
export function useMailFake(name: string): { outboxDir: string; url: string } {
  const mail = { outboxDir: path.resolve(`tmp/integration/outbox-${name}-${process.pid}-${Date.now()}`), url: "" };
  let fake: Awaited<ReturnType<typeof startMailFake>> | undefined;
  beforeAll(async () => {
    fake = await startMailFake({ port: 0, outboxDir: mail.outboxDir });
    mail.url = fake.url;
    process.env.RESEND_BASE_URL = fake.url;
  });
  afterAll(async () => {
    await fake?.close();
    fs.rmSync(mail.outboxDir, { recursive: true, force: true });
  });
  return mail;
}

import fs from "node:fs";
import { describe, expect, it, vi } from "vitest";
import { useMailFake } from "#tests/support/mail-fake.ts";

// The outbox page exists only while the app uses the mail fake; the switch is mocked here so both
// sides can be tested in one process (the real function reads the environment once).
const mailFake = vi.hoisted(() => ({ on: true }));
vi.mock("#app/utils/env.server.ts", async (importOriginal) => {
  const original = await importOriginal<typeof import("#app/utils/env.server.ts")>();
  return { ...original, usesMailFake: () => mailFake.on, devOutboxOpen: () => mailFake.on };
});

const { sendEmail } = await import("#app/mail/send.server.ts");
const { signInMessage } = await import("#app/mail/templates.server.ts");
const outbox = await import("#app/routes/dev.outbox.tsx");
const { args, get, run } = await import("#tests/support/auth.ts");

const fake = useMailFake("dev");

type Page = {
  problem: string | null;
  messages: { to: string[]; code: string | null; links: string[]; subject: string; html: string | null }[];
};

describe("the development outbox", () => {
  it("lists messages newest first with their codes, links and both versions", async () => {
    mailFake.on = true;
    await sendEmail({
      to: "first@example.org",
      ...signInMessage({ code: "ABC234", link: "http://localhost/sign-in/link?t=one", minutes: 10 }),
    });
    await sendEmail({
      to: "second@example.org",
      ...signInMessage({ code: "XYZ789", link: "http://localhost/sign-in/link?t=two", minutes: 10 }),
    });
    const page = await run(() => outbox.loader(args(get("/dev/outbox"))));
    expect(page.status).toBe(200);
    const { messages: all, problem } = page.data as Page;
    expect(problem).toBeNull();
    // The file's other tests may have left messages in the same outbox (the tests run in any order).
    const messages = all.filter((m) => ["first@example.org", "second@example.org"].includes(m.to[0]!));
    expect(messages.map((m) => m.to[0])).toEqual(["second@example.org", "first@example.org"]);
    expect(messages[0]).toMatchObject({ code: "XYZ789", links: ["http://localhost/sign-in/link?t=two"] });
    expect(messages[0]!.html).toContain("XYZ789");
  });

  it("is a 404 when a real mail service is configured", async () => {
    mailFake.on = false;
    const page = await run(() => outbox.loader(args(get("/dev/outbox"))));
    expect(page.status).toBe(404);
    mailFake.on = true;
  });

  it("says so when the fake is not answering", async () => {
    mailFake.on = true;
    const saved = process.env.RESEND_BASE_URL;
    process.env.RESEND_BASE_URL = "http://127.0.0.1:9"; // nothing listens on the discard port
    try {
      const page = await run(() => outbox.loader(args(get("/dev/outbox"))));
      expect(page.status).toBe(200);
      expect((page.data as Page).problem).toMatch(/not answering/);
    } finally {
      process.env.RESEND_BASE_URL = saved;
    }
  });
});

describe("the mail fake", () => {
  it("speaks the hosted API: needs a key, answers an id, keeps the message", async () => {
    const payload = { from: "a@example.org", to: ["b@example.org"], subject: "Hello", text: "Hi" };
    const noKey = await fetch(`${fake.url}/emails`, {
      method: "POST",
      body: JSON.stringify(payload),
      headers: { "Content-Type": "application/json" },
    });
    expect(noKey.status).toBe(401);
    const badKey = await fetch(`${fake.url}/emails`, {
      method: "POST",
      body: JSON.stringify(payload),
      headers: { "Content-Type": "application/json", Authorization: "Bearer nope" },
    });
    expect(badKey.status).toBe(403);
    const invalid = await fetch(`${fake.url}/emails`, {
      method: "POST",
      body: JSON.stringify({ from: "a@example.org" }),
      headers: { "Content-Type": "application/json", Authorization: "Bearer re_test" },
    });
    expect(invalid.status).toBe(422);
    const ok = await fetch(`${fake.url}/emails`, {
      method: "POST",
      body: JSON.stringify(payload),
      headers: { "Content-Type": "application/json", Authorization: "Bearer re_test" },
    });
    expect(ok.status).toBe(200);
    const { id } = (await ok.json()) as { id: string };
    expect(id).toMatch(/^[0-9a-f-]{36}$/);
    const one = await fetch(`${fake.url}/emails/${id}`);
    expect(await one.json()).toMatchObject({ id, to: ["b@example.org"], subject: "Hello", text: "Hi" });
    expect(fs.readdirSync(fake.outboxDir).some((f) => f.endsWith(`${id}.json`))).toBe(true);
  });
});

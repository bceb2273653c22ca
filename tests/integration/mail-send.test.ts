// sendEmail against the Resend API's shape, with the HTTP answered in-process by msw (nothing
// leaves the test): what the SDK sends (POST /emails, bearer key, from/to/subject/text/html/tags),
// the id it returns, and a refusal turned into a MailError that says where the mail was going.
import { http, HttpResponse } from "msw";
import { setupServer } from "msw/node";
import { afterAll, afterEach, beforeAll, describe, expect, it } from "vitest";
import { MailError, sendEmail } from "#app/mail/send.server.ts";

// A closed local port: should anything slip past msw, it goes nowhere.
const BASE = "http://127.0.0.1:9";
const server = setupServer();
let saved: string | undefined;

beforeAll(() => {
  saved = process.env.RESEND_BASE_URL;
  process.env.RESEND_BASE_URL = BASE;
  server.listen({ onUnhandledRequest: "error" });
});
afterEach(() => server.resetHandlers());
afterAll(() => {
  server.close();
  if (saved === undefined) delete process.env.RESEND_BASE_URL;
  else process.env.RESEND_BASE_URL = saved;
});

const message = {
  to: "reader@example.org",
  subject: "Your sign-in code",
  text: "Your sign-in code: ABC123",
  html: "<p>Your sign-in code: <b>ABC123</b></p>",
  tags: [{ name: "kind", value: "sign-in" }],
};

describe("sendEmail (Resend API shape)", () => {
  it("posts the message to /emails with the key and returns the id the API gives", async () => {
    let seen: { auth: string | null; type: string | null; body: Record<string, unknown> } | undefined;
    server.use(
      http.post(`${BASE}/emails`, async ({ request }) => {
        seen = {
          auth: request.headers.get("Authorization"),
          type: request.headers.get("Content-Type"),
          body: (await request.json()) as Record<string, unknown>,
        };
        return HttpResponse.json({ id: "msg_0001" });
      }),
    );
    const sent = await sendEmail(message);
    expect(sent).toEqual({ id: "msg_0001" });
    expect(seen!.auth).toBe("Bearer re_fake_local_key");
    expect(seen!.type).toMatch(/^application\/json/);
    expect(seen!.body).toMatchObject({
      from: "Thawline <no-reply@thawline.example.org>",
      to: ["reader@example.org"],
      subject: "Your sign-in code",
      text: "Your sign-in code: ABC123",
      html: "<p>Your sign-in code: <b>ABC123</b></p>",
      tags: [{ name: "kind", value: "sign-in" }],
    });
  });

  it("turns a refusal into a MailError naming the API's message and where the mail was going", async () => {
    server.use(
      http.post(`${BASE}/emails`, () =>
        HttpResponse.json({ statusCode: 422, name: "validation_error", message: "Invalid `to` field." }, { status: 422 }),
      ),
    );
    const error = await sendEmail(message).catch((e: unknown) => e);
    expect(error).toBeInstanceOf(MailError);
    expect((error as MailError).message).toBe(
      `The message could not be sent: Invalid \`to\` field. (local mail fake at ${BASE}; is it running?)`,
    );
  });
});

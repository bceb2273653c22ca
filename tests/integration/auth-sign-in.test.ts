import { and, eq } from "drizzle-orm";
import { afterEach, describe, expect, it, vi } from "vitest";
import { readOutbox } from "#seed/mail-fake.ts";
import { getDb } from "#app/db/client.server.ts";
import { auditLog, sessions, users } from "#app/db/schema.ts";
import { getOptionalUser } from "#app/auth/session.server.ts";
import {
  CODE_REQUESTS_PER_ADDRESS,
  CODE_REQUESTS_PER_CLIENT,
  MAX_TRIES_PER_CODE,
  SIGN_IN_ERRORS,
} from "#app/auth/sign-in.server.ts";
import { readMessageText } from "#app/mail/templates.server.ts";
import { createUser, setActive } from "#app/models/accounts/users.server.ts";
import * as signIn from "#app/routes/account/sign-in.tsx";
import * as signInLink from "#app/routes/account/sign-in.link.tsx";
import * as signOut from "#app/routes/account/sign-out.ts";
import { args, CookieJar, get, post, run } from "#tests/support/auth.ts";
import { useMailFake } from "#tests/support/mail-fake.ts";

const fake = useMailFake("sign-in");
afterEach(() => {
  vi.useRealTimers();
});

let n = 0;
function freshClient() {
  n += 1;
  return `198.51.100.${n}`;
}

function person(roles: Parameters<typeof createUser>[1]["roles"] = ["contributor"]) {
  n += 1;
  const email = `signer${n}@example.org`;
  const id = createUser(getDb(), { email, name: `Signer ${n}`, roles });
  return { id, email, name: `Signer ${n}` };
}

function mailTo(email: string) {
  return readOutbox(fake.outboxDir).filter((m) => m.to.includes(email));
}

/** Asks for a code the way the form does; returns the jar with the pending sign-in cookies. */
async function requestCode(email: string, opts: { jar?: CookieJar; client?: string; redirectTo?: string } = {}) {
  const jar = opts.jar ?? new CookieJar();
  const form: Record<string, string> = { intent: "request", email, website: "" };
  if (opts.redirectTo) form.redirectTo = opts.redirectTo;
  const outcome = await run(() =>
    signIn.action(
      args(post("/sign-in", form, { cookie: jar.header(), headers: { "X-Thawline-Client": opts.client ?? freshClient() } })),
    ),
  );
  if (outcome.headers) jar.take(new Response(null, { headers: outcome.headers }));
  return { jar, outcome };
}

async function enterCode(jar: CookieJar, code: string) {
  const outcome = await run(() =>
    signIn.action(
      args(post("/sign-in", { intent: "verify", code }, { cookie: jar.header(), headers: { "User-Agent": "vitest" } })),
    ),
  );
  jar.take(new Response(null, { headers: outcome.headers }));
  return outcome;
}

async function pageState(jar: CookieJar) {
  const outcome = await run(() => signIn.loader(args(get("/sign-in", { cookie: jar.header() }))));
  return outcome.data as { pendingEmail: string | null; error: string | null };
}

function latestCode(email: string) {
  const message = mailTo(email)[0];
  expect(message, `a message to ${email}`).toBeDefined();
  return readMessageText(message!.text ?? "");
}

describe("sign-in with an e-mailed code", () => {
  it("mails a code and a link to an invited person and signs them in with the code", async () => {
    const p = person(["reviewer"]);
    const { jar, outcome } = await requestCode(p.email);
    expect(outcome.status).toBe(302);
    expect(outcome.location).toBe("/sign-in");
    expect(await pageState(jar)).toMatchObject({ pendingEmail: p.email, error: null });

    const messages = mailTo(p.email);
    expect(messages).toHaveLength(1);
    expect(messages[0]!.subject).toMatch(/sign-in code/);
    expect(messages[0]!.html).toContain("Sign in to Thawline");
    const { code, links } = latestCode(p.email);
    expect(code).toMatch(/^[A-Z0-9]{6}$/);
    expect(links.some((l) => l.includes("/sign-in/link?t="))).toBe(true);

    const done = await enterCode(jar, code!.toLowerCase()); // codes are not case-sensitive for people
    expect(done.status).toBe(302);
    expect(done.location).toBe("/");
    const user = await getOptionalUser(get("/", { cookie: jar.header() }));
    expect(user).toMatchObject({ id: p.id, email: p.email, roles: ["reviewer"] });
    // The pending sign-in is cleared once used.
    expect(jar.get("thawline_sign_in")).toBeUndefined();

    const row = getDb().select().from(users).where(eq(users.id, p.id)).get();
    expect(row?.lastSignInAt).toBeInstanceOf(Date);
    const audits = getDb()
      .select()
      .from(auditLog)
      .where(and(eq(auditLog.action, "auth.sign_in"), eq(auditLog.entityId, String(p.id))))
      .all();
    expect(audits).toHaveLength(1);
    expect(audits[0]!.after).toEqual({ method: "code" });
  });

  it("accepts a code only once, even with a copy of the cookies", async () => {
    const p = person();
    const { jar } = await requestCode(p.email);
    const { code } = latestCode(p.email);
    const copy = new CookieJar().set("_totp", jar.get("_totp")!).set("thawline_sign_in", jar.get("thawline_sign_in")!);
    expect((await enterCode(jar, code!)).location).toBe("/");
    const replay = await enterCode(copy, code!);
    expect(replay.location).toBe("/sign-in");
    expect(copy.get("thawline_session")).toBeUndefined();
    expect(getDb().select().from(sessions).where(eq(sessions.userId, p.id)).all()).toHaveLength(1);
  });

  it("refuses a wrong code, records the failed attempt, and still accepts the right one", async () => {
    const p = person();
    const { jar } = await requestCode(p.email);
    const { code } = latestCode(p.email);
    const wrong = code === "AAAAAA" ? "BBBBBB" : "AAAAAA";
    const outcome = await enterCode(jar, wrong);
    expect(outcome.status).toBe(302);
    expect(outcome.location).toBe("/sign-in");
    expect(jar.get("thawline_session")).toBeUndefined();
    expect(await pageState(jar)).toMatchObject({ pendingEmail: p.email, error: SIGN_IN_ERRORS.invalidTotp });
    const failed = getDb()
      .select()
      .from(auditLog)
      .where(and(eq(auditLog.action, "auth.sign_in_failed"), eq(auditLog.entityId, String(p.id))))
      .all();
    expect(failed).toHaveLength(1);

    const ok = await enterCode(jar, code!);
    expect(ok.location).toBe("/");
    expect(jar.get("thawline_session")).toBeDefined();
  });

  it("refuses an expired code", async () => {
    const p = person();
    vi.useFakeTimers({ toFake: ["Date"] });
    vi.setSystemTime(new Date("2031-03-01T10:00:00Z"));
    const { jar } = await requestCode(p.email);
    const { code } = latestCode(p.email);
    vi.setSystemTime(new Date("2031-03-01T10:11:00Z"));
    const outcome = await enterCode(jar, code!);
    expect(outcome.location).toBe("/sign-in");
    expect(jar.get("thawline_session")).toBeUndefined();
    expect((await pageState(jar)).error).toBe(SIGN_IN_ERRORS.expiredTotp);
    expect(getDb().select().from(sessions).where(eq(sessions.userId, p.id)).all()).toHaveLength(0);
  });

  it("allows only a bounded number of tries per code, even if the last one is right", async () => {
    const p = person();
    const { jar } = await requestCode(p.email);
    const { code } = latestCode(p.email);
    const wrong = code === "AAAAAA" ? "BBBBBB" : "AAAAAA";
    for (let i = 0; i < MAX_TRIES_PER_CODE; i++) await enterCode(jar, wrong);
    const outcome = await enterCode(jar, code!);
    expect(outcome.location).toBe("/sign-in");
    expect(jar.get("thawline_session")).toBeUndefined();
    const state = await pageState(jar);
    expect(state.error).toBe(SIGN_IN_ERRORS.rateLimitExceeded);
    expect(state.pendingEmail).toBeNull();
  });

  it("gives an unknown address the same answer as a known one, and sends nothing", async () => {
    const known = person();
    const unknownEmail = `nobody-${Date.now()}@example.org`;
    const a = await requestCode(known.email);
    const b = await requestCode(unknownEmail);
    expect(b.outcome.status).toBe(a.outcome.status);
    expect(b.outcome.location).toBe(a.outcome.location);
    expect(b.jar.names()).toEqual(a.jar.names());
    expect(await pageState(b.jar)).toEqual({ ...(await pageState(a.jar)), pendingEmail: unknownEmail });
    expect(mailTo(unknownEmail)).toHaveLength(0);
    // Any code is refused for it.
    const outcome = await enterCode(b.jar, "ABCDEF");
    expect(outcome.location).toBe("/sign-in");
    expect(b.jar.get("thawline_session")).toBeUndefined();
  });

  it("limits code requests per address", async () => {
    const p = person();
    for (let i = 0; i < CODE_REQUESTS_PER_ADDRESS.limit; i++) {
      expect((await requestCode(p.email)).outcome.status).toBe(302);
    }
    const refused = await requestCode(p.email);
    expect(refused.outcome.status).toBe(429);
    expect((refused.outcome.data as { error: string }).error).toMatch(/Too many sign-in codes/);
    expect(mailTo(p.email)).toHaveLength(CODE_REQUESTS_PER_ADDRESS.limit);
  });

  it("limits code requests per client address", async () => {
    const client = freshClient();
    for (let i = 0; i < CODE_REQUESTS_PER_CLIENT.limit; i++) {
      expect((await requestCode(`spray${i}-${client}@example.org`, { client })).outcome.status).toBe(302);
    }
    const p = person();
    const refused = await requestCode(p.email, { client });
    expect(refused.outcome.status).toBe(429);
    expect(mailTo(p.email)).toHaveLength(0);
    // Another client is not affected.
    expect((await requestCode(p.email)).outcome.status).toBe(302);
  });

  it("ignores a filled-in honeypot: no mail, no pending sign-in", async () => {
    const p = person();
    const outcome = await run(() =>
      signIn.action(args(post("/sign-in", { intent: "request", email: p.email, website: "http://spam.example" }))),
    );
    expect(outcome.status).toBe(302);
    expect(outcome.headers.getSetCookie()).toEqual([]);
    expect(mailTo(p.email)).toHaveLength(0);
  });

  it("refuses a code when the address in the pending cookie was swapped", async () => {
    const attacker = person(["contributor"]);
    const victim = person(["editor"]);
    const { jar } = await requestCode(attacker.email);
    const { code } = latestCode(attacker.email);
    const totp = new URLSearchParams(jar.get("_totp")!);
    totp.set("email", victim.email);
    jar.set("_totp", totp.toString());
    const outcome = await enterCode(jar, code!);
    expect(outcome.location).toBe("/sign-in");
    expect(jar.get("thawline_session")).toBeUndefined();
    expect(getDb().select().from(sessions).where(eq(sessions.userId, victim.id)).all()).toHaveLength(0);
  });

  it("answers a code without a sign-in in progress with a clear message", async () => {
    const outcome = await enterCode(new CookieJar(), "ABCDEF");
    expect(outcome.status).toBe(400);
    expect((outcome.data as { error: string }).error).toBe(SIGN_IN_ERRORS.missingSessionTotp);
  });

  it("rejects a malformed address at the field", async () => {
    const outcome = await run(() => signIn.action(args(post("/sign-in", { intent: "request", email: "not an address" }))));
    expect(outcome.status).toBe(400);
    expect(JSON.stringify(outcome.data)).toContain("name@example.org");
  });

  it("answers an unknown intent with 400", async () => {
    const outcome = await run(() => signIn.action(args(post("/sign-in", { intent: "nonsense" }))));
    expect(outcome.status).toBe(400);
  });

  it("returns to the page that asked for sign-in, never to another site", async () => {
    const p = person();
    const { jar } = await requestCode(p.email, { redirectTo: "/account?tab=tokens" });
    expect((await enterCode(jar, latestCode(p.email).code!)).location).toBe("/account?tab=tokens");

    const q = person();
    const evil = await requestCode(q.email, { redirectTo: "//evil.example/phish" });
    expect((await enterCode(evil.jar, latestCode(q.email).code!)).location).toBe("/");
  });

  it("sends a signed-in person on from the sign-in page", async () => {
    const p = person();
    const { jar } = await requestCode(p.email);
    await enterCode(jar, latestCode(p.email).code!);
    const outcome = await run(() => signIn.loader(args(get("/sign-in?redirectTo=/explore", { cookie: jar.header() }))));
    expect(outcome.status).toBe(302);
    expect(outcome.location).toBe("/explore");
  });
});

describe("sign-in with the magic link", () => {
  it("shows a confirmation on GET (changing nothing) and signs in on POST", async () => {
    const p = person(["modeller"]);
    const { jar } = await requestCode(p.email);
    const link = new URL(latestCode(p.email).links.find((l) => l.includes("/sign-in/link"))!);
    const t = link.searchParams.get("t")!;

    const page = await run(() => signInLink.loader(args(get(`${link.pathname}${link.search}`, { cookie: jar.header() }))));
    expect(page.status).toBe(200);
    expect(page.data).toEqual({ token: t, email: p.email });
    expect(getDb().select().from(sessions).where(eq(sessions.userId, p.id)).all()).toHaveLength(0);

    const done = await run(() => signInLink.action(args(post("/sign-in/link", { t }, { cookie: jar.header() }))));
    jar.take(new Response(null, { headers: done.headers }));
    expect(done.status).toBe(302);
    expect(done.location).toBe("/");
    expect(await getOptionalUser(get("/", { cookie: jar.header() }))).toMatchObject({ id: p.id, roles: ["modeller"] });
    const audit = getDb()
      .select()
      .from(auditLog)
      .where(and(eq(auditLog.action, "auth.sign_in"), eq(auditLog.entityId, String(p.id))))
      .get();
    expect(audit?.after).toEqual({ method: "link" });
  });

  it("refuses a link opened in a browser without the pending sign-in", async () => {
    const p = person();
    await requestCode(p.email);
    const t = new URL(latestCode(p.email).links[0]!).searchParams.get("t")!;
    const page = await run(() => signInLink.loader(args(get(`/sign-in/link?t=${encodeURIComponent(t)}`))));
    expect((page.data as { email: string | null }).email).toBeNull();
    const done = await run(() => signInLink.action(args(post("/sign-in/link", { t }))));
    expect(done.status).toBe(400);
    expect(getDb().select().from(sessions).where(eq(sessions.userId, p.id)).all()).toHaveLength(0);
  });

  it("refuses a forged link token", async () => {
    const p = person();
    const { jar } = await requestCode(p.email);
    const done = await run(() =>
      signInLink.action(args(post("/sign-in/link", { t: "forged.token.value" }, { cookie: jar.header() }))),
    );
    jar.take(new Response(null, { headers: done.headers }));
    expect(done.location).toBe("/sign-in");
    expect(jar.get("thawline_session")).toBeUndefined();
  });
});

describe("deactivated people", () => {
  it("get no mail, cannot finish a sign-in, and lose their sessions at once", async () => {
    const p = person();
    const { jar } = await requestCode(p.email);
    await enterCode(jar, latestCode(p.email).code!);
    expect(await getOptionalUser(get("/", { cookie: jar.header() }))).not.toBeNull();

    // A second browser has a code in hand when the person is deactivated.
    const second = await requestCode(p.email);
    const code = latestCode(p.email).code!;
    setActive(getDb(), p.id, false, { actorId: null });

    expect(await getOptionalUser(get("/", { cookie: jar.header() }))).toBeNull();
    expect(getDb().select().from(sessions).where(eq(sessions.userId, p.id)).all()).toHaveLength(0);

    const refused = await enterCode(second.jar, code);
    expect(refused.location).toBe("/sign-in");
    expect(second.jar.get("thawline_session")).toBeUndefined();

    const before = mailTo(p.email).length;
    const again = await requestCode(p.email);
    expect(again.outcome.status).toBe(302); // the same neutral answer
    expect(mailTo(p.email)).toHaveLength(before);
  });
});

describe("sign-out", () => {
  it("ends the session on POST and changes nothing on GET", async () => {
    const p = person();
    const { jar } = await requestCode(p.email);
    await enterCode(jar, latestCode(p.email).code!);

    const visit = await run(() => signOut.loader(args(get("/sign-out", { cookie: jar.header() }))));
    expect(visit.status).toBe(302);
    expect(await getOptionalUser(get("/", { cookie: jar.header() }))).not.toBeNull();

    const cookieBefore = jar.header();
    const out = await run(() => signOut.action(args(post("/sign-out", {}, { cookie: cookieBefore }))));
    expect(out.status).toBe(302);
    expect(out.location).toBe("/");
    // Even the old cookie no longer works: the session row is gone.
    expect(await getOptionalUser(get("/", { cookie: cookieBefore }))).toBeNull();
    expect(getDb().select().from(sessions).where(eq(sessions.userId, p.id)).all()).toHaveLength(0);
  });
});

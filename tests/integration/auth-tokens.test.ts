import { eq } from "drizzle-orm";
import { describe, expect, it } from "vitest";
import { getDb } from "#app/db/client.server.ts";
import { apiTokens, auditLog, sessions } from "#app/db/schema.ts";
import { requireApiRole } from "#app/auth/api.server.ts";
import { hashToken } from "#app/models/accounts/tokens.server.ts";
import { sessionHandle } from "#app/models/accounts/sessions.server.ts";
import { setActive } from "#app/models/accounts/users.server.ts";
import { createSession } from "#app/auth/session.server.ts";
import * as account from "#app/routes/account/account.tsx";
import * as me from "#app/routes/api/v1/me.ts";
import { args, get, personWithSession, post, run } from "#tests/support/auth.ts";

function apiMe(token: string | null) {
  return run(() => me.loader(args(get("/api/v1/me", { headers: token ? { Authorization: `Bearer ${token}` } : {} }))));
}

async function newToken(cookie: string, label = "cluster scripts") {
  const outcome = await run(() => account.action(args(post("/account", { intent: "create-token", label }, { cookie }))));
  expect(outcome.status).toBe(200);
  return (outcome.data as { newToken: { token: string } }).newToken.token;
}

describe("personal API tokens", () => {
  it("are shown once, stored hashed with a prefix, and act as their owner on /api/v1/me", async () => {
    const p = await personWithSession(["modeller", "reviewer"]);
    const token = await newToken(p.cookie);
    expect(token).toMatch(/^thw_[A-Za-z0-9_-]{43}$/);

    const row = getDb().select().from(apiTokens).where(eq(apiTokens.userId, p.id)).get()!;
    expect(row.tokenHash).toBe(hashToken(token));
    expect(row.tokenHash).not.toContain(token);
    expect(token.startsWith(row.prefix)).toBe(true);
    expect(row.label).toBe("cluster scripts");
    expect(row.lastUsedAt).toBeNull();

    const answer = await apiMe(token);
    expect(answer.status).toBe(200);
    expect(answer.data).toEqual({ email: p.email, roles: ["reviewer", "modeller"] });
    expect(getDb().select().from(apiTokens).where(eq(apiTokens.id, row.id)).get()!.lastUsedAt).toBeInstanceOf(Date);

    // The account page lists it by prefix, never the token itself.
    const page = await run(() => account.loader(args(get("/account", { cookie: p.cookie }))));
    const tokens = (page.data as { tokens: { prefix: string; label: string }[] }).tokens;
    expect(tokens).toEqual([expect.objectContaining({ prefix: row.prefix, label: "cluster scripts" })]);
    expect(JSON.stringify(page.data)).not.toContain(token);

    const created = getDb().select().from(auditLog).where(eq(auditLog.action, "token.create")).all();
    expect(created.some((a) => a.entityId === String(row.id) && a.actorId === p.id)).toBe(true);
  });

  it("stop working once revoked", async () => {
    const p = await personWithSession(["modeller"]);
    const token = await newToken(p.cookie);
    const id = getDb()
      .select()
      .from(apiTokens)
      .where(eq(apiTokens.tokenHash, hashToken(token)))
      .get()!.id;
    const revoked = await run(() =>
      account.action(args(post("/account", { intent: "revoke-token", tokenId: String(id) }, { cookie: p.cookie }))),
    );
    expect(revoked.status).toBe(302);
    const answer = await apiMe(token);
    expect(answer.status).toBe(401);
    expect(answer.data).toEqual({ error: expect.any(String) });
    expect(
      getDb()
        .select()
        .from(auditLog)
        .where(eq(auditLog.action, "token.revoke"))
        .all()
        .some((a) => a.entityId === String(id)),
    ).toBe(true);
  });

  it("cannot be revoked by someone else", async () => {
    const owner = await personWithSession(["modeller"]);
    const other = await personWithSession(["modeller"]);
    const token = await newToken(owner.cookie);
    const id = getDb()
      .select()
      .from(apiTokens)
      .where(eq(apiTokens.tokenHash, hashToken(token)))
      .get()!.id;
    const outcome = await run(() =>
      account.action(args(post("/account", { intent: "revoke-token", tokenId: String(id) }, { cookie: other.cookie }))),
    );
    expect(outcome.status).toBe(404);
    expect((await apiMe(token)).status).toBe(200);
  });

  it("are revoked when their owner is deactivated: reactivation does not bring them back", async () => {
    const p = await personWithSession(["modeller"]);
    const token = await newToken(p.cookie);
    setActive(getDb(), p.id, false, { actorId: null });
    expect((await apiMe(token)).status).toBe(401);
    setActive(getDb(), p.id, true, { actorId: null });
    expect((await apiMe(token)).status).toBe(401);
  });

  it("answer 401 JSON for a missing, malformed or unknown token", async () => {
    for (const token of [null, "garbage", "thw_" + "x".repeat(43)]) {
      const answer = await apiMe(token);
      expect(answer.status).toBe(401);
      expect(answer.headers.get("Content-Type")).toContain("application/json");
      expect(answer.data).toEqual({ error: expect.any(String) });
    }
    const basic = await run(() => me.loader(args(get("/api/v1/me", { headers: { Authorization: "Basic dXNlcjpwdw==" } }))));
    expect(basic.status).toBe(401);
  });

  it("ignore the session cookie: the API wants a token", async () => {
    const p = await personWithSession(["modeller"]);
    expect((await run(() => me.loader(args(get("/api/v1/me", { cookie: p.cookie }))))).status).toBe(401);
  });

  it("give 403 JSON when the person lacks the role an endpoint needs", async () => {
    const p = await personWithSession(["contributor"]);
    const token = await newToken(p.cookie);
    const request = get("/api/v1/x", { headers: { Authorization: `Bearer ${token}` } });
    const outcome = await run(() => requireApiRole(request, "editor"));
    expect(outcome.status).toBe(403);
    expect(outcome.data).toEqual({ error: expect.stringContaining("editor") });
    const allowed = await requireApiRole(request, "contributor", "editor");
    expect(allowed.email).toBe(p.email);
  });

  it("need a name", async () => {
    const p = await personWithSession(["modeller"]);
    const outcome = await run(() =>
      account.action(args(post("/account", { intent: "create-token", label: "  " }, { cookie: p.cookie }))),
    );
    expect(outcome.status).toBe(400);
    expect(getDb().select().from(apiTokens).where(eq(apiTokens.userId, p.id)).all()).toHaveLength(0);
  });
});

describe("the account page", () => {
  it("lists the person's sessions and ends another one", async () => {
    const p = await personWithSession(["contributor"]);
    const other = await createSession(
      p.id,
      new Request("http://localhost/", { headers: { "User-Agent": "Mozilla/5.0 (X11; Linux x86_64) Firefox/140.0" } }),
    );
    const page = await run(() => account.loader(args(get("/account", { cookie: p.cookie }))));
    const listed = (page.data as { sessions: { handle: string; current: boolean; browser: string }[] }).sessions;
    expect(listed).toHaveLength(2);
    expect(listed.filter((s) => s.current)).toHaveLength(1);
    expect(listed.find((s) => !s.current)!.browser).toBe("Firefox on Linux");
    expect(JSON.stringify(page.data)).not.toContain(other.id);

    const outcome = await run(() =>
      account.action(
        args(post("/account", { intent: "revoke-session", session: sessionHandle(other.id) }, { cookie: p.cookie })),
      ),
    );
    expect(outcome.status).toBe(302);
    expect(outcome.location).toBe("/account");
    const left = getDb().select().from(sessions).where(eq(sessions.userId, p.id)).all();
    expect(left.map((s) => s.id)).toEqual([p.sessionId]);
  });

  it("cannot end someone else's session", async () => {
    const p = await personWithSession(["contributor"]);
    const q = await personWithSession(["contributor"]);
    const outcome = await run(() =>
      account.action(
        args(post("/account", { intent: "revoke-session", session: sessionHandle(q.sessionId) }, { cookie: p.cookie })),
      ),
    );
    expect(outcome.status).toBe(404);
    expect(getDb().select().from(sessions).where(eq(sessions.id, q.sessionId)).get()).toBeDefined();
  });

  it("signs out everywhere else", async () => {
    const p = await personWithSession(["contributor"]);
    await createSession(p.id, new Request("http://localhost/"));
    await createSession(p.id, new Request("http://localhost/"));
    const outcome = await run(() =>
      account.action(args(post("/account", { intent: "revoke-other-sessions" }, { cookie: p.cookie }))),
    );
    expect(outcome.status).toBe(302);
    expect(
      getDb()
        .select()
        .from(sessions)
        .where(eq(sessions.userId, p.id))
        .all()
        .map((s) => s.id),
    ).toEqual([p.sessionId]);
  });

  it("ending the current session signs out", async () => {
    const p = await personWithSession(["contributor"]);
    const outcome = await run(() =>
      account.action(
        args(post("/account", { intent: "revoke-session", session: sessionHandle(p.sessionId) }, { cookie: p.cookie })),
      ),
    );
    expect(outcome.location).toBe("/");
    expect(outcome.headers.getSetCookie().some((c) => c.startsWith("thawline_session=;") && /Max-Age=0/i.test(c))).toBe(true);
    expect(getDb().select().from(sessions).where(eq(sessions.id, p.sessionId)).get()).toBeUndefined();
  });

  it("answers an unknown intent with 400 and sends signed-out visitors to sign in", async () => {
    const p = await personWithSession(["contributor"]);
    expect((await run(() => account.action(args(post("/account", { intent: "bogus" }, { cookie: p.cookie }))))).status).toBe(400);
    const visitor = await run(() => account.loader(args(get("/account"))));
    expect(visitor.status).toBe(302);
    expect(visitor.location).toBe("/sign-in?redirectTo=%2Faccount");
  });
});

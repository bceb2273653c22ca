import { and, eq } from "drizzle-orm";
import { describe, expect, it } from "vitest";
import { readOutbox } from "#seed/mail-fake.ts";
import { getDb } from "#app/db/client.server.ts";
import { auditLog, sessions, users } from "#app/db/schema.ts";
import { getOptionalUser } from "#app/auth/session.server.ts";
import { getPerson } from "#app/models/accounts/users.server.ts";
import * as people from "#app/routes/admin/people.tsx";
import * as me from "#app/routes/api/v1/me.ts";
import * as account from "#app/routes/account/account.tsx";
import { args, get, personWithSession, post, run } from "#tests/support/auth.ts";
import { useMailFake } from "#tests/support/mail-fake.ts";

const fake = useMailFake("people");

describe("the people page", () => {
  it("is for editors only", async () => {
    const visitor = await run(() => people.loader(args(get("/people"))));
    expect(visitor.status).toBe(302);
    expect(visitor.location).toMatch(/^\/sign-in\?redirectTo=/);
    for (const role of ["contributor", "reviewer", "modeller"] as const) {
      const p = await personWithSession([role]);
      expect((await run(() => people.loader(args(get("/people", { cookie: p.cookie }))))).status).toBe(403);
      const write = await run(() =>
        people.action(
          args(
            post(
              "/people",
              { intent: "invite", name: "X", email: `x-${role}@example.org`, roles: "editor" },
              { cookie: p.cookie },
            ),
          ),
        ),
      );
      expect(write.status).toBe(403);
      expect(
        getDb()
          .select()
          .from(users)
          .where(eq(users.email, `x-${role}@example.org`))
          .get(),
      ).toBeUndefined();
    }
  });

  it("lists people with roles and status", async () => {
    const editor = await personWithSession(["editor"]);
    const other = await personWithSession(["reviewer", "contributor"]);
    const page = await run(() => people.loader(args(get("/people", { cookie: editor.cookie }))));
    expect(page.status).toBe(200);
    const listed = (page.data as { people: { id: number; roles: string[]; active: boolean }[] }).people;
    expect(listed.find((p) => p.id === other.id)).toMatchObject({ roles: ["contributor", "reviewer"], active: true });
  });

  it("invites a person with roles and mails them an invitation", async () => {
    const editor = await personWithSession(["editor"], { name: "Edith Editor" });
    const outcome = await run(() =>
      people.action(
        args(
          post(
            "/people",
            { intent: "invite", name: "Noor Field", email: "Noor.Field@Example.org", roles: ["contributor", "reviewer"] },
            { cookie: editor.cookie },
          ),
        ),
      ),
    );
    expect(outcome.status).toBe(302);
    const row = getDb().select().from(users).where(eq(users.email, "noor.field@example.org")).get()!;
    expect(row).toMatchObject({ name: "Noor Field", active: true });
    expect(getPerson(getDb(), row.id)!.roles).toEqual(["contributor", "reviewer"]);

    const mail = readOutbox(fake.outboxDir).filter((m) => m.to.includes("noor.field@example.org"));
    expect(mail).toHaveLength(1);
    expect(mail[0]!.subject).toBe("You are invited to Thawline");
    expect(mail[0]!.text).toContain("Edith Editor has invited you");
    expect(mail[0]!.text).toContain("/sign-in?email=noor.field%40example.org");
    expect(mail[0]!.html).toContain("Go to the sign-in page");

    const invite = getDb()
      .select()
      .from(auditLog)
      .where(and(eq(auditLog.action, "user.invite"), eq(auditLog.entityId, String(row.id))))
      .get();
    expect(invite?.actorId).toBe(editor.id);
  });

  it("refuses an invitation with a taken address or no roles, at the field", async () => {
    const editor = await personWithSession(["editor"]);
    const existing = await personWithSession(["modeller"], { name: "Already Here" });
    const taken = await run(() =>
      people.action(
        args(
          post(
            "/people",
            { intent: "invite", name: "Again", email: existing.email, roles: "reviewer" },
            { cookie: editor.cookie },
          ),
        ),
      ),
    );
    expect(taken.status).toBe(400);
    expect(JSON.stringify(taken.data)).toContain("already belongs to Already Here");
    expect(getPerson(getDb(), existing.id)!.roles).toEqual(["modeller"]);

    const noRoles = await run(() =>
      people.action(
        args(post("/people", { intent: "invite", name: "Nobody", email: "no-roles@example.org" }, { cookie: editor.cookie })),
      ),
    );
    expect(noRoles.status).toBe(400);
    expect(JSON.stringify(noRoles.data)).toContain("Choose at least one role");
  });

  it("changes roles with an audit record of before and after", async () => {
    const editor = await personWithSession(["editor"]);
    const p = await personWithSession(["contributor"]);
    const outcome = await run(() =>
      people.action(
        args(
          post(
            "/people",
            { intent: "set-roles", userId: String(p.id), roles: ["reviewer", "modeller"] },
            { cookie: editor.cookie },
          ),
        ),
      ),
    );
    expect(outcome.status).toBe(302);
    expect((await getOptionalUser(get("/", { cookie: p.cookie })))!.roles.sort()).toEqual(["modeller", "reviewer"]);
    const record = getDb()
      .select()
      .from(auditLog)
      .where(and(eq(auditLog.action, "user.roles"), eq(auditLog.entityId, String(p.id))))
      .get()!;
    expect(record.before).toEqual({ roles: ["contributor"] });
    expect(record.after).toEqual({ roles: ["reviewer", "modeller"] });
    expect(record.actorId).toBe(editor.id);
  });

  it("deactivates a person: sessions end and tokens stop at once; reactivation lets them sign in again", async () => {
    const editor = await personWithSession(["editor"]);
    const p = await personWithSession(["modeller"]);
    const created = await run(() =>
      account.action(args(post("/account", { intent: "create-token", label: "t" }, { cookie: p.cookie }))),
    );
    const token = (created.data as { newToken: { token: string } }).newToken.token;

    const off = await run(() =>
      people.action(args(post("/people", { intent: "deactivate", userId: String(p.id) }, { cookie: editor.cookie }))),
    );
    expect(off.status).toBe(302);
    expect(await getOptionalUser(get("/", { cookie: p.cookie }))).toBeNull();
    expect(getDb().select().from(sessions).where(eq(sessions.userId, p.id)).all()).toHaveLength(0);
    const api = await run(() => me.loader(args(get("/api/v1/me", { headers: { Authorization: `Bearer ${token}` } }))));
    expect(api.status).toBe(401);
    const page = await run(() => people.loader(args(get("/people", { cookie: editor.cookie }))));
    expect((page.data as { people: { id: number; active: boolean }[] }).people.find((x) => x.id === p.id)!.active).toBe(false);
    expect(
      getDb()
        .select()
        .from(auditLog)
        .where(and(eq(auditLog.action, "user.deactivate"), eq(auditLog.entityId, String(p.id))))
        .get(),
    ).toBeDefined();

    const on = await run(() =>
      people.action(args(post("/people", { intent: "reactivate", userId: String(p.id) }, { cookie: editor.cookie }))),
    );
    expect(on.status).toBe(302);
    expect(getPerson(getDb(), p.id)!.active).toBe(true);
    expect(
      getDb()
        .select()
        .from(auditLog)
        .where(and(eq(auditLog.action, "user.reactivate"), eq(auditLog.entityId, String(p.id))))
        .get(),
    ).toBeDefined();
  });

  it("keeps an editor from locking themselves out", async () => {
    const editor = await personWithSession(["editor", "reviewer"]);
    const drop = await run(() =>
      people.action(
        args(post("/people", { intent: "set-roles", userId: String(editor.id), roles: "reviewer" }, { cookie: editor.cookie })),
      ),
    );
    expect(drop.status).toBe(400);
    expect(getPerson(getDb(), editor.id)!.roles).toEqual(["reviewer", "editor"]);
    const self = await run(() =>
      people.action(args(post("/people", { intent: "deactivate", userId: String(editor.id) }, { cookie: editor.cookie }))),
    );
    expect(self.status).toBe(400);
    expect(getPerson(getDb(), editor.id)!.active).toBe(true);
  });

  it("answers an unknown intent with 400 and a missing person with 404", async () => {
    const editor = await personWithSession(["editor"]);
    expect((await run(() => people.action(args(post("/people", { intent: "promote" }, { cookie: editor.cookie }))))).status).toBe(
      400,
    );
    expect(
      (
        await run(() =>
          people.action(args(post("/people", { intent: "deactivate", userId: "999999" }, { cookie: editor.cookie }))),
        )
      ).status,
    ).toBe(404);
  });
});

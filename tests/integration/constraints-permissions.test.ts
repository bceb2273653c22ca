import { describe, expect, it } from "vitest";
import { seedForFile } from "#tests/support/test-db.ts";
import { getDb } from "#app/db/client.server.ts";
import { createToken } from "#app/models/accounts/tokens.server.ts";
import { saveSet } from "#app/models/releases/constraint-sets.server.ts";
import * as constraintsPage from "#app/routes/constraints/constraints.tsx";
import * as releasesApi from "#app/routes/api/v1/releases.ts";
import { seedDemo } from "#seed/seed.server.ts";
import { args, personWithSession, post, run } from "#tests/support/auth.ts";

/*
 * Saving and publishing from /constraints and the API: who may, and that a refused request writes
 * nothing at all (no set, no release, no release item, no audit row).
 */

type Person = Awaited<ReturnType<typeof personWithSession>>;
const count = (table: string) => getDb().$client.prepare(`select count(*) from ${table}`).pluck().get() as number;
const written = () => ({
  sets: count("constraint_sets"),
  releases: count("releases"),
  items: count("release_items"),
  audit: count("audit_log"),
});

let contributor: Person;
let reviewer: Person;
let modeller: Person;
let editor: Person;
let n = 0;

seedForFile(async () => {
  await seedDemo(getDb(), { size: "small" });
  contributor = await personWithSession(["contributor"]);
  reviewer = await personWithSession(["reviewer"]);
  modeller = await personWithSession(["modeller"]);
  editor = await personWithSession(["editor"]);
});

const pagePost = (who: Person, form: Record<string, string>) =>
  run(() => constraintsPage.action(args(post("/constraints", form, { cookie: who.cookie }))));

const publishForm = () => ({
  intent: "publish",
  name: `Refusal check ${++n}`,
  version: "1",
  description: "",
  filter: "min_grade=2",
});

describe("saving a set from /constraints", () => {
  it("a contributor's save is refused with 403 and writes nothing", async () => {
    const before = written();
    const out = await pagePost(contributor, { intent: "save", name: "Not mine to keep", filter: "min_grade=2" });
    expect(out.status).toBe(403);
    expect(written()).toEqual(before);
  });

  it("a modeller's save is kept (so the refusal above is about the role)", async () => {
    const before = written();
    const out = await pagePost(modeller, { intent: "save", name: "Grade 2 and better", filter: "min_grade=2" });
    expect(out.status).toBe(302);
    expect(written().sets).toBe(before.sets + 1);
  });

  it("a contributor cannot delete a modeller's set", async () => {
    saveSet(getDb(), modeller.id, "Kept by its modeller", "min_grade=3");
    const id = getDb()
      .$client.prepare("select id from constraint_sets where name = 'Kept by its modeller'")
      .pluck()
      .get() as number;
    const before = written();
    const out = await pagePost(contributor, { intent: "delete", id: String(id), filter: "" });
    expect(out.status).toBe(403);
    expect(written()).toEqual(before);
  });
});

describe("publishing from /constraints", () => {
  for (const role of ["contributor", "reviewer", "modeller"] as const) {
    it(`a ${role}'s publish is refused with 403 and writes nothing`, async () => {
      const who = { contributor, reviewer, modeller }[role];
      const before = written();
      const out = await pagePost(who, publishForm());
      expect(out.status).toBe(403);
      expect(written()).toEqual(before);
    });
  }

  it("an editor's publish with a malformed filter is a 400 at the filter and writes nothing", async () => {
    const before = written();
    const out = await pagePost(editor, { ...publishForm(), filter: "min_grade=9" });
    expect(out.status).toBe(400);
    expect(JSON.stringify(out.data)).toMatch(/min_grade/);
    expect(written()).toEqual(before);
  });

  it("an editor's publish writes one release, its items and one audit row", async () => {
    const before = written();
    const out = await pagePost(editor, publishForm());
    expect(out.status).toBe(302);
    expect(out.location).toMatch(/^\/releases\/refusal-check-\d+-v1$/);
    const after = written();
    expect(after.releases).toBe(before.releases + 1);
    expect(after.items).toBeGreaterThan(before.items);
    expect(after.audit).toBe(before.audit + 1);
  });
});

describe("POST /api/v1/releases", () => {
  const apiPost = (token: string | null, body: unknown) =>
    run(() =>
      releasesApi.action(
        args(
          new Request("http://localhost/api/v1/releases", {
            method: "POST",
            headers: { "Content-Type": "application/json", ...(token ? { Authorization: `Bearer ${token}` } : {}) },
            body: JSON.stringify(body),
          }),
        ),
      ),
    );

  it("a modeller's token is refused with 403 and nothing is written; no token is a 401", async () => {
    const { token } = createToken(getDb(), modeller.id, "test", { actorId: modeller.id });
    const before = written();
    expect((await apiPost(token, { name: "API refusal", description: "", filter: { min_grade: 2 } })).status).toBe(403);
    expect((await apiPost(null, { name: "API refusal", description: "", filter: { min_grade: 2 } })).status).toBe(401);
    expect(written()).toEqual(before);
  });
});

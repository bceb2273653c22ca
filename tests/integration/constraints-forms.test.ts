import { describe, expect, it } from "vitest";
import { seedForFile } from "#tests/support/test-db.ts";
import { getDb } from "#app/db/client.server.ts";
import * as constraintsPage from "#app/routes/constraints/constraints.tsx";
import { seedDemo } from "#seed/seed.server.ts";
import { args, personWithSession, post, run } from "#tests/support/auth.ts";

/*
 * The /constraints save and publish forms are checked by one Zod schema on both sides
 * (app/utils/constraint-forms.ts, through Conform): every problem comes back at once, each at its
 * field, and a refused form writes nothing.
 */

type Person = Awaited<ReturnType<typeof personWithSession>>;
type Reply = { intent: string; result: { status: string; error: Record<string, string[] | null> } };
const count = (table: string) => getDb().$client.prepare(`select count(*) from ${table}`).pluck().get() as number;
const written = () => ({ sets: count("constraint_sets"), releases: count("releases"), items: count("release_items") });

let modeller: Person;
let editor: Person;

seedForFile(async () => {
  await seedDemo(getDb(), { size: "small" });
  modeller = await personWithSession(["modeller"]);
  editor = await personWithSession(["editor"]);
});

const send = (who: Person, form: Record<string, string>) =>
  run(() => constraintsPage.action(args(post("/constraints", form, { cookie: who.cookie }))));

const errorsOf = (data: unknown) => (data as Reply).result.error;

describe("saving a set", () => {
  it("without a name: a 400 at the name, nothing saved", async () => {
    const before = written();
    const out = await send(modeller, { intent: "save", name: "   ", filter: "min_grade=2" });
    expect(out.status).toBe(400);
    expect(errorsOf(out.data).name).toEqual(["Give the set a name, so you can find it again."]);
    expect(written()).toEqual(before);
  });

  it("a name too long and a filter that cannot be read: both reported at once, each at its field", async () => {
    const out = await send(modeller, { intent: "save", name: "x".repeat(121), filter: "min_grade=7&bbox=1,2" });
    expect(out.status).toBe(400);
    const errors = errorsOf(out.data);
    expect(errors.name).toEqual(["Keep the name to 120 characters."]);
    expect(errors.filter![0]).toMatch(
      /^The filter cannot be used: .*min_grade.*bbox|^The filter cannot be used: .*bbox.*min_grade/,
    );
  });

  it("a good one is saved with the filter in its normal form", async () => {
    const out = await send(modeller, { intent: "save", name: "Grade 3 only", filter: "min_grade=3" });
    expect(out.status).toBe(302);
    const row = getDb().$client.prepare("select filter from constraint_sets where name = 'Grade 3 only'").get() as {
      filter: string;
    };
    expect(row.filter).toBe("min_grade=3");
  });
});

describe("publishing a release", () => {
  it("without a name, with a version too long and a bad filter: a 400 naming all three, nothing written", async () => {
    const before = written();
    const out = await send(editor, {
      intent: "publish",
      name: "",
      version: "v".repeat(41),
      description: "",
      filter: "to_cal_bp=abc",
    });
    expect(out.status).toBe(400);
    const errors = errorsOf(out.data);
    expect(errors.name).toEqual(["Give the release a name; it is part of its citation."]);
    expect(errors.version).toEqual(["Keep the version to 40 characters, e.g. 2 or 2026.1."]);
    expect(errors.filter![0]).toMatch(/to_cal_bp/);
    expect(written()).toEqual(before);
  });

  it("a name and version already used: a 400 at the version; an unknown curve: a 400 at the filter", async () => {
    const first = await send(editor, {
      intent: "publish",
      name: "Forms test",
      version: "1",
      description: "",
      filter: "min_grade=3",
    });
    expect(first.status).toBe(302);
    const before = written();
    const again = await send(editor, {
      intent: "publish",
      name: "Forms test",
      version: "1",
      description: "",
      filter: "min_grade=3",
    });
    expect(again.status).toBe(400);
    expect(errorsOf(again.data).version![0]).toMatch(/already exists/);
    const curve = await send(editor, { intent: "publish", name: "Forms test", version: "2", filter: "curve=NoSuchCurve" });
    expect(curve.status).toBe(400);
    expect(errorsOf(curve.data).filter![0]).toMatch(/curve: no curve named "NoSuchCurve"/);
    expect(written()).toEqual(before);
  });

  it("an empty version gets the next number for the name", async () => {
    const out = await send(editor, { intent: "publish", name: "Next number", version: "", filter: "min_grade=3" });
    expect(out.status).toBe(302);
    expect(out.location).toBe("/releases/next-number-v1");
    const second = await send(editor, { intent: "publish", name: "Next number", filter: "min_grade=2" });
    expect(second.location).toBe("/releases/next-number-v2");
  });
});

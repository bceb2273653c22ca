// Editors correct a stored citation (/publications, /publications/:id): the one-line citation is
// rewritten from the corrected parts, the change is audited, every problem of the form is named at
// its field at once, and a DOI another paper has is refused. Published releases keep their rows.
import { eq } from "drizzle-orm";
import { describe, expect, it } from "vitest";
import { getDb } from "#app/db/client.server.ts";
import { auditLog, publications } from "#app/db/schema.ts";
import * as listPage from "#app/routes/admin/publications.tsx";
import * as editPage from "#app/routes/admin/publication.tsx";
import { createTestDetermination } from "#tests/factories.ts";
import { args, get, personWithSession, post, run } from "#tests/support/auth.ts";

const db = () => getDb();

function paper(doi: string | null, title = "Invented ages of a fictional fjord") {
  return db()
    .insert(publications)
    .values({ citation: `Fixture, A. (2019) ${title}.`, authors: "Fixture, A.", year: 2019, title, journal: null, doi })
    .returning()
    .get();
}

const form = (over: Record<string, string> = {}) => ({
  authors: "Fixture, A., Tester, B.",
  year: "2020",
  title: "Invented ages of a fictional fjord, revisited",
  journal: "Journal of Imaginary Glacial Studies 12, 1–9",
  doi: "",
  ...over,
});

type Reply = { result: { error?: Record<string, string[] | null> } };
const errorsOf = (data: unknown) =>
  Object.fromEntries(Object.entries((data as Reply).result.error ?? {}).filter(([, v]) => v?.length)) as Record<string, string[]>;

describe("correcting a citation", () => {
  it("rewrites the citation from the corrected parts, audits it, and the list shows the new words", async () => {
    const editor = await personWithSession(["editor"]);
    const p = paper("10.99999/fixture.correct.1");
    createTestDetermination(db(), { publicationId: p.id });
    const page = await run(() =>
      editPage.loader(args(get(`/publications/${p.id}`, { cookie: editor.cookie }), { id: String(p.id) })),
    );
    expect(page.status).toBe(200);
    expect((page.data as { publication: { cited: number } }).publication.cited).toBe(1);

    const answer = await run(() =>
      editPage.action(
        args(
          post(`/publications/${p.id}`, form({ doi: "https://doi.org/10.99999/FIXTURE.correct.1" }), { cookie: editor.cookie }),
          {
            id: String(p.id),
          },
        ),
      ),
    );
    expect(answer.status).toBe(302);
    expect(answer.location).toBe("/publications");
    const stored = db().select().from(publications).where(eq(publications.id, p.id)).get()!;
    expect(stored.citation).toBe(
      "Fixture, A., Tester, B. (2020) Invented ages of a fictional fjord, revisited. Journal of Imaginary Glacial Studies 12, 1–9.",
    );
    expect(stored.doi).toBe("10.99999/FIXTURE.correct.1"); // the resolver's prefix is taken off
    const entry = db()
      .select()
      .from(auditLog)
      .where(eq(auditLog.entityId, String(p.id)))
      .all()
      .at(-1)!;
    expect(entry.action).toBe("publication.update");
    expect(entry.actorId).toBe(editor.id);
    expect(entry.before).toMatchObject({ citation: p.citation });

    const list = await run(() => listPage.loader(args(get("/publications?q=revisited", { cookie: editor.cookie }))));
    const rows = (list.data as { publications: { id: number; citation: string }[] }).publications;
    expect(rows.map((r) => r.id)).toEqual([p.id]);
  });

  it("names every problem at its field at once, and changes nothing", async () => {
    const editor = await personWithSession(["editor"]);
    const p = paper(null);
    const answer = await run(() =>
      editPage.action(
        args(
          post(`/publications/${p.id}`, form({ authors: " ", year: "1492", title: "", doi: "doi.org/x" }), {
            cookie: editor.cookie,
          }),
          {
            id: String(p.id),
          },
        ),
      ),
    );
    expect(answer.status).toBe(400);
    const errors = errorsOf(answer.data);
    expect(Object.keys(errors).sort()).toEqual(["authors", "doi", "title", "year"]);
    expect(errors.year![0]).toMatch(/from 1700/);
    expect(errors.doi![0]).toMatch(/starts with 10\./);
    expect(db().select().from(publications).where(eq(publications.id, p.id)).get()!.citation).toBe(p.citation);
  });

  it("refuses a DOI another paper has (whatever its case) and a DOI with an invisible character", async () => {
    const editor = await personWithSession(["editor"]);
    const other = paper("10.99999/fixture.taken.1", "Another invented paper");
    const p = paper(null);
    const taken = await run(() =>
      editPage.action(
        args(post(`/publications/${p.id}`, form({ doi: "10.99999/FIXTURE.TAKEN.1" }), { cookie: editor.cookie }), {
          id: String(p.id),
        }),
      ),
    );
    expect(taken.status).toBe(400);
    expect(errorsOf(taken.data).doi![0]).toContain(other.citation);
    const hidden = await run(() =>
      editPage.action(
        args(post(`/publications/${p.id}`, form({ doi: "10.99999/fixture\u200b.2" }), { cookie: editor.cookie }), {
          id: String(p.id),
        }),
      ),
    );
    expect(hidden.status).toBe(400);
    expect(errorsOf(hidden.data).doi![0]).toMatch(/zero-width space/);
  });

  it("says so when nothing changed; an unknown publication is a 404; others than editors are refused", async () => {
    const editor = await personWithSession(["editor"]);
    const p = paper("10.99999/fixture.same.1");
    const same = await run(() =>
      editPage.action(
        args(
          post(
            `/publications/${p.id}`,
            { authors: p.authors!, year: String(p.year), title: p.title!, journal: "", doi: p.doi! },
            { cookie: editor.cookie },
          ),
          { id: String(p.id) },
        ),
      ),
    );
    expect(same.status).toBe(302);
    expect(same.headers.get("Set-Cookie")).toBeTruthy();
    expect(
      db()
        .select()
        .from(auditLog)
        .where(eq(auditLog.entityId, String(p.id)))
        .all(),
    ).toHaveLength(0);

    const missing = await run(() =>
      editPage.loader(args(get("/publications/999999", { cookie: editor.cookie }), { id: "999999" })),
    );
    expect(missing.status).toBe(404);

    const reviewer = await personWithSession(["reviewer", "contributor", "modeller"]);
    const refused = await run(() =>
      editPage.action(args(post(`/publications/${p.id}`, form(), { cookie: reviewer.cookie }), { id: String(p.id) })),
    );
    expect(refused.status).toBe(403);
    expect(db().select().from(publications).where(eq(publications.id, p.id)).get()!.title).toBe(p.title);
  });
});

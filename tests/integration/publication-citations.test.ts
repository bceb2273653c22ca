// A publication is cited by its citation (authors, year, title, journal), entered once, with the DOI as
// its identifier: through the upload, the form and the API, decided by the one placement rule. An
// unknown DOI without its citation is refused at the DOI; it never becomes a publication without a title.
import { describe, expect, it } from "vitest";
import { getDb } from "#app/db/client.server.ts";
import { createToken } from "#app/models/accounts/tokens.server.ts";
import { createUpload } from "#app/models/submission/uploads/batches.server.ts";
import { commitUpload } from "#app/models/submission/uploads/commit.server.ts";
import { determinationDetail } from "#app/models/registry/determination-page.server.ts";
import * as determinationsApi from "#app/routes/api/v1/determinations.ts";
import * as determinationApi from "#app/routes/api/v1/determination.ts";
import * as submitPage from "#app/routes/contribute/submit.tsx";
import * as editPage from "#app/routes/contribute/submission-edit.tsx";
import { createTestLab, createTestUser } from "#tests/factories.ts";
import { args, get, ORIGIN, personWithSession, post, run } from "#tests/support/auth.ts";
import { toCsvText, uploadRows, type Cells } from "#tests/support/upload-files.ts";

const db = () => getDb();
let n = 0;
const prefix = () => `CIT${++n}Q`;
const doi = () => `10.99999/thawline.cite.${process.pid % 1000}.${++n}`;
const count = (table: string) => db().$client.prepare(`select count(*) from ${table}`).pluck().get() as number;
type Pub = {
  id: number;
  citation: string;
  doi: string | null;
  authors: string | null;
  year: number | null;
  title: string | null;
  journal: string | null;
};
const pubByDoi = (d: string) => db().$client.prepare("select * from publications where doi = ?").get(d) as Pub | undefined;
const pubOf = (determinationId: number) =>
  db()
    .$client.prepare("select p.* from publications p join determinations d on d.publication_id = p.id where d.id = ?")
    .get(determinationId) as Pub | undefined;

const CITATION = {
  pub_authors: "Rimeholt, K., Sastrugi, P.",
  pub_year: 2019,
  pub_title: "Invented shell ages from an imaginary fjord",
  pub_journal: "Journal of Imaginary Glacial Studies 59, 101–118",
};
const NO_CITATION = { pub_authors: null, pub_year: null, pub_title: null, pub_journal: null };

/** `k` valid rows at sites of their own, citing `d`, without a citation unless given. */
function rowsCiting(k: number, d: string | null, citation: Partial<typeof CITATION> | typeof NO_CITATION = NO_CITATION): Cells[] {
  const p = prefix();
  return uploadRows(k, { prefix: p }).map((r) => ({
    ...r,
    site_name: `${p} ${String(r.site_name)}`,
    doi: d,
    ...NO_CITATION,
    ...citation,
  }));
}

async function upload(rows: Cells[], userId = createTestUser(db()).id) {
  const { batch, validation } = await createUpload(db(), { userId, fileName: "cite.csv", file: Buffer.from(toCsvText(rows)) });
  return { batch, validation, userId };
}
const at = (v: { errors: { row: number; column: string; message: string }[] }, row: number, column: string) =>
  v.errors.filter((e) => e.row === row && e.column === column).map((e) => e.message);

describe("upload", () => {
  it("refuses an unknown DOI without its citation at the DOI, on every row citing it, and stores nothing", async () => {
    const d = doi();
    const before = { pubs: count("publications"), dets: count("determinations") };
    const { validation } = await upload(rowsCiting(3, d));
    expect(validation.validCount).toBe(0);
    for (const row of [2, 3, 4]) {
      expect(at(validation, row, "doi")[0]).toMatch(
        new RegExp(`${d.replaceAll(".", "\\.")} is not in the registry yet.*pub_title`),
      );
    }
    expect(pubByDoi(d)).toBeUndefined();
    expect(count("publications")).toBe(before.pubs);
    expect(count("determinations")).toBe(before.dets);
    expect(db().$client.prepare("select count(*) from publications where citation like 'DOI %'").pluck().get()).toBe(0);
  });

  it("takes the citation once, from any row of the file with that DOI, and writes one publication from its fields", async () => {
    const d = doi();
    const rows = rowsCiting(4, d);
    Object.assign(rows[2]!, CITATION); // only the third row carries it: rows before and after it are placed too
    const { batch, validation, userId } = await upload(rows);
    expect(validation.errors).toEqual([]);
    expect(validation.validCount).toBe(4);
    const result = commitUpload(db(), batch, "all", { userId });
    const pub = pubByDoi(d)!;
    expect(pub).toMatchObject({
      authors: CITATION.pub_authors,
      year: 2019,
      title: CITATION.pub_title,
      journal: CITATION.pub_journal,
      citation:
        "Rimeholt, K., Sastrugi, P. (2019) Invented shell ages from an imaginary fjord. Journal of Imaginary Glacial Studies 59, 101–118.",
    });
    const linked = db().$client.prepare("select count(*) from determinations where publication_id = ?").pluck().get(pub.id);
    expect(linked).toBe(4);
    expect(result).toBeTruthy();
  });

  it("names each missing part of a partial citation at its column", async () => {
    const rows = rowsCiting(1, doi(), { pub_authors: "Rimeholt, K.", pub_year: 2019 });
    const { validation } = await upload(rows);
    expect(at(validation, 2, "pub_title")[0]).toMatch(/Give the publication's title too.*authors, year, title and journal/);
    expect(at(validation, 2, "pub_journal")[0]).toMatch(/journal too/);
    expect(at(validation, 2, "pub_authors")).toEqual([]);
  });

  it("refuses two different citations for one DOI in one file, at the later row's title", async () => {
    const d = doi();
    const rows = rowsCiting(2, d, CITATION);
    rows[1]!.pub_title = "Another invented title";
    const { validation } = await upload(rows);
    expect(at(validation, 3, "pub_title")[0]).toMatch(/Row 2 of this file gives .* the title “Invented shell ages/);
  });

  it("uses a DOI the registry knows without a citation, and keeps the stored citation over a different one (with a caution)", async () => {
    const d = doi();
    const first = await upload(rowsCiting(1, d, CITATION));
    commitUpload(db(), first.batch, "all", { userId: first.userId });
    const again = await upload([...rowsCiting(1, d), ...rowsCiting(1, d, { ...CITATION, pub_title: "A different title" })]);
    expect(again.validation.errors).toEqual([]);
    expect(again.validation.warnings.find((w) => w.row === 3 && w.column === "pub_title")?.message).toMatch(
      /already has .* as “Rimeholt.*not used/,
    );
    commitUpload(db(), again.batch, "all", { userId: again.userId });
    expect(pubByDoi(d)!.title).toBe(CITATION.pub_title);
    expect(db().$client.prepare("select count(*) from publications where doi = ?").pluck().get(d)).toBe(1);
  });

  it("stores a paper without a DOI by its citation, and finds it again by year and title (any case)", async () => {
    const title = `A report without a DOI ${prefix()}`;
    const first = await upload(rowsCiting(1, null, { ...CITATION, pub_title: title }));
    commitUpload(db(), first.batch, "all", { userId: first.userId });
    const second = await upload(rowsCiting(2, null, { ...CITATION, pub_title: `${title.toUpperCase()}.` }));
    expect(second.validation.errors).toEqual([]);
    commitUpload(db(), second.batch, "all", { userId: second.userId });
    const pubs = db().$client.prepare("select * from publications where lower(title) = lower(?)").all(title) as Pub[];
    expect(pubs).toHaveLength(1);
    expect(pubs[0]).toMatchObject({ doi: null, year: 2019, title });
    expect(db().$client.prepare("select count(*) from determinations where publication_id = ?").pluck().get(pubs[0]!.id)).toBe(3);
  });

  it("completes a publication stored before citations were asked for, and says it honestly until then", async () => {
    const d = doi();
    db().$client.prepare("insert into publications (citation, doi) values (?, ?)").run(`untitled — doi:${d}`, d);
    const bare = await upload(rowsCiting(1, d));
    expect(bare.validation.errors).toEqual([]); // a known DOI: its dates may cite it
    commitUpload(db(), bare.batch, "all", { userId: bare.userId });
    const detId = db().$client.prepare("select max(id) from determinations").pluck().get() as number;
    const page = determinationDetail(db(), detId)!;
    expect(page.publication).toMatchObject({ title: null, citation: `untitled — doi:${d}` });
    const cited = await upload(rowsCiting(1, d, CITATION));
    commitUpload(db(), cited.batch, "all", { userId: cited.userId });
    expect(pubByDoi(d)).toMatchObject({
      title: CITATION.pub_title,
      citation: expect.stringMatching(/^Rimeholt, K\., Sastrugi, P\. \(2019\)/),
    });
  });
});

describe("form", () => {
  function form(lab: string, overrides: Record<string, string> = {}): Record<string, string> {
    const p = prefix();
    return {
      site_choice: "new",
      site_name: `Citation Test Bluff ${p}`,
      latitude: "58.4321",
      longitude: "-63.9876",
      sample_code: `${p}-S`,
      material: "plant macrofossil",
      method: "radiocarbon",
      constraint_kind: "minimum",
      lab_name: lab,
      lab_code: `${p}-1`,
      c14_age: "9000",
      c14_error: "40",
      d13c: "-27.1",
      age_normalised: "yes",
      ...overrides,
    };
  }
  const errorsOf = (out: { data: unknown }) =>
    ((out.data as { result?: { error?: Record<string, string[] | null> } }).result?.error ?? {}) as Record<
      string,
      string[] | null
    >;

  it("asks for the citation of an unknown DOI in the form's words, then stores it with the determination; an edit keeps it", async () => {
    const person = await personWithSession(["contributor"]);
    const lab = createTestLab(db()).name;
    const d = doi();
    const before = count("publications");
    const refused = await run(() => submitPage.action(args(post("/submit", form(lab, { doi: d }), { cookie: person.cookie }))));
    expect(refused.status).toBe(400);
    const message = errorsOf(refused).doi?.[0] ?? "";
    expect(message).toMatch(
      /not in the registry yet: give the publication's authors, year published, title of the publication and journal/,
    );
    expect(message).not.toMatch(/pub_|row|file/);
    expect(count("publications")).toBe(before);

    const partial = await run(() =>
      submitPage.action(args(post("/submit", form(lab, { doi: d, pub_title: "Only a title" }), { cookie: person.cookie }))),
    );
    expect(errorsOf(partial).pub_authors?.[0]).toMatch(/Give the publication's authors too/);

    const fields = { doi: d, ...Object.fromEntries(Object.entries(CITATION).map(([k, v]) => [k, String(v)])) };
    const created = await run(() => submitPage.action(args(post("/submit", form(lab, fields), { cookie: person.cookie }))));
    expect(created.status).toBe(302);
    const id = Number(/\/determinations\/(\d+)/.exec(created.location ?? "")![1]);
    expect(pubOf(id)).toMatchObject({ doi: d, title: CITATION.pub_title, journal: CITATION.pub_journal, year: 2019 });

    const edit = await run(() =>
      editPage.loader(args(get(`/submissions/${id}/edit`, { cookie: person.cookie }), { id: String(id) })),
    );
    const defaults = (edit.data as { defaults: Record<string, string> }).defaults;
    expect(defaults).toMatchObject({ doi: d, pub_title: CITATION.pub_title, pub_year: "2019" });
    const saved = await run(() =>
      editPage.action(
        args(post(`/submissions/${id}/edit`, { ...defaults, c14_error: "45", intent: "save" }, { cookie: person.cookie }), {
          id: String(id),
        }),
      ),
    );
    expect(saved.status).toBe(302);
    expect(pubOf(id)?.doi).toBe(d);
  });

  it("keeps a paper without a DOI through an edit (found again by its citation)", async () => {
    const person = await personWithSession(["contributor"]);
    const lab = createTestLab(db()).name;
    const title = `A thesis without a DOI ${prefix()}`;
    const fields = { ...Object.fromEntries(Object.entries(CITATION).map(([k, v]) => [k, String(v)])), pub_title: title };
    const created = await run(() => submitPage.action(args(post("/submit", form(lab, fields), { cookie: person.cookie }))));
    expect(created.status).toBe(302);
    const id = Number(/\/determinations\/(\d+)/.exec(created.location ?? "")![1]);
    const pubId = pubOf(id)!.id;
    const edit = await run(() =>
      editPage.loader(args(get(`/submissions/${id}/edit`, { cookie: person.cookie }), { id: String(id) })),
    );
    const defaults = (edit.data as { defaults: Record<string, string> }).defaults;
    await run(() =>
      editPage.action(
        args(post(`/submissions/${id}/edit`, { ...defaults, c14_error: "50", intent: "save" }, { cookie: person.cookie }), {
          id: String(id),
        }),
      ),
    );
    expect(pubOf(id)?.id).toBe(pubId);
    expect(db().$client.prepare("select count(*) from publications where title = ?").pluck().get(title)).toBe(1);
  });
});

describe("API", () => {
  function jsonPost(body: unknown, token: string) {
    return new Request(`${ORIGIN}/api/v1/determinations`, {
      method: "POST",
      body: JSON.stringify(body),
      headers: { "Content-Type": "application/json", Authorization: `Bearer ${token}` },
    });
  }

  it("refuses an unknown DOI without its citation at doi (400, nothing written), stores it with one, and answers with the publication", async () => {
    const user = createTestUser(db(), ["contributor"]);
    const token = createToken(db(), user.id, "test", { actorId: user.id }).token;
    const d = doi();
    const before = count("publications");
    const refused = await run(() => determinationsApi.action(args(jsonPost(rowsCiting(2, d), token))));
    expect(refused.status).toBe(400);
    const errors = (refused.data as { errors: { index: number; column: string; message: string }[] }).errors;
    expect(errors.map((e) => [e.index, e.column])).toEqual([
      [0, "doi"],
      [1, "doi"],
    ]);
    expect(count("publications")).toBe(before);

    const rows = rowsCiting(2, d);
    Object.assign(rows[1]!, CITATION);
    const created = await run(() => determinationsApi.action(args(jsonPost(rows, token))));
    expect(created.status).toBe(201);
    const [id] = (created.data as { determination_ids: number[] }).determination_ids;
    const one = await run(() =>
      determinationApi.loader(
        args(new Request(`${ORIGIN}/api/v1/determinations/${id}`, { headers: { Authorization: `Bearer ${token}` } }), {
          id: String(id),
        }),
      ),
    );
    expect(one.status).toBe(200);
    expect((one.data as { doi: string; publication: unknown }).publication).toEqual({
      doi: d,
      authors: CITATION.pub_authors,
      year: 2019,
      title: CITATION.pub_title,
      journal: CITATION.pub_journal,
      citation: expect.stringContaining("(2019) Invented shell ages from an imaginary fjord."),
    });
    expect((one.data as { doi: string }).doi).toBe(d);
  });
});

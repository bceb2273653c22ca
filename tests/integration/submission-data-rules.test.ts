// The submission pipeline's data rules, one test per rule: where a row belongs (site, sample, lab,
// publication) decided once for the form, the upload and the API; one undo rule for the uploads
// list and the undo; every problem of a row at once; labs registered from uploads; lab codes
// unique without regard to case.
import { eq } from "drizzle-orm";
import { describe, expect, it } from "vitest";
import { getDb } from "#app/db/client.server.ts";
import { labs, publications, samples, sites, uploadBatches } from "#app/db/schema.ts";
import { createUpload, listBatches } from "#app/models/submission/uploads/batches.server.ts";
import { commitUpload, submitJsonRows } from "#app/models/submission/uploads/commit.server.ts";
import { undoUpload } from "#app/models/submission/uploads/undo.server.ts";
import * as labsPage from "#app/routes/admin/labs.tsx";
import { createTestDetermination, createTestLab, createTestUser } from "#tests/factories.ts";
import { args, get, personWithSession, post, run } from "#tests/support/auth.ts";
import { toCsvText, uploadRows, type Cells } from "#tests/support/upload-files.ts";

const db = () => getDb();
let fileNo = 0;
const prefix = () => `QRL${++fileNo}W`;
const count = (table: string) => db().$client.prepare(`select count(*) from ${table}`).pluck().get() as number;

async function upload(rows: Cells[], userId = createTestUser(db()).id) {
  const { batch, validation } = await createUpload(db(), { userId, fileName: "rules.csv", file: Buffer.from(toCsvText(rows)) });
  return { batch, validation, userId };
}

/** Valid rows at sites of their own (other tests of this file write to the same database). */
const rowsAt = (n: number, p: string): Cells[] =>
  uploadRows(n, { prefix: p }).map((r) => ({ ...r, site_name: `${p} ${String(r.site_name)}` }));

const at = (v: { errors: { row: number; column: string; message: string }[] }, row: number, column: string) =>
  v.errors.filter((e) => e.row === row && e.column === column).map((e) => e.message);

/** Three radiocarbon rows on one sample code at one new site. */
function sharedSampleRows(p: string, materials: string[]): Cells[] {
  const [base] = rowsAt(1, p);
  return materials.map((material, i) => ({
    ...base,
    lab_code: `${p}-${i + 1}`,
    sample_code: `${p}-S1`,
    material,
    curve: material === "marine shell" ? "marine20" : "intcal20",
    delta_r: material === "marine shell" ? 150 : null,
    delta_r_error: material === "marine shell" ? 60 : null,
    delta_r_curve: material === "marine shell" ? "marine20" : null,
    d13c: material === "marine shell" ? 1.1 : -26.1,
  }));
}

describe("1. one placement rule: a sample keeps its material", () => {
  it("refuses rows of one file that share a sample code but not its material, at the material column", async () => {
    const p = prefix();
    const { validation } = await upload(sharedSampleRows(p, ["plant macrofossil", "marine shell", "marine shell"]));
    expect(validation.validCount).toBe(1);
    for (const row of [3, 4]) {
      const messages = at(validation, row, "material");
      expect(messages).toHaveLength(1);
      expect(messages[0]).toContain(`${p}-S1`);
      expect(messages[0]).toContain("plant macrofossil");
    }
  });

  it("refuses an upload row whose sample is already in the registry with another material", async () => {
    const p = prefix();
    const first = await upload(sharedSampleRows(p, ["plant macrofossil"]));
    commitUpload(db(), first.batch, "all", { userId: first.userId });
    const [again] = sharedSampleRows(p, ["marine shell"]);
    const { validation } = await upload([{ ...again, lab_code: `${p}-9` }]);
    expect(validation.validCount).toBe(0);
    expect(at(validation, 2, "material")[0]).toMatch(new RegExp(`${p}-S1.*plant macrofossil`));
  });

  it("gives the API the same answer, and writes nothing", () => {
    const p = prefix();
    const user = createTestUser(db());
    const before = count("determinations");
    const result = submitJsonRows(db(), sharedSampleRows(p, ["plant macrofossil", "marine shell"]), { userId: user.id });
    expect(result.ok).toBe(false);
    if (result.ok) return;
    const material = result.errors.filter((e) => e.column === "material");
    expect(material).toHaveLength(1);
    expect(material[0]!.index).toBe(1);
    expect(material[0]!.message).toContain("plant macrofossil");
    expect(count("determinations")).toBe(before);
  });
});

describe("2. one undo rule", () => {
  it("does not offer Undo for a batch the undo refuses, and says why", async () => {
    const { batch, userId } = await upload(rowsAt(3, prefix()));
    const { determinationIds } = commitUpload(db(), batch, "all", { userId });
    db().$client.prepare("update determinations set status = 'withdrawn' where id = ?").run(determinationIds[0]);
    const listed = listBatches(db(), userId).find((b) => b.id === batch.id)!;
    const committed = db().select().from(uploadBatches).where(eq(uploadBatches.id, batch.id)).get()!;
    expect(() => undoUpload(db(), committed, { userId })).toThrow(/withdrawn/);
    expect(listed.undoable).toBe(false);
    expect(listed.undoRefusal).toMatch(/withdrawn/);
  });

  it("records the batch that created each site and sample, and undoes them without the audit log", async () => {
    const { batch, userId } = await upload(rowsAt(6, prefix()));
    const before = { sites: count("sites"), samples: count("samples") };
    commitUpload(db(), batch, "all", { userId });
    const created = db().select({ id: samples.id }).from(samples).where(eq(samples.createdInBatchId, batch.id)).all();
    expect(created.length).toBe(3);
    expect(db().select({ id: sites.id }).from(sites).where(eq(sites.createdInBatchId, batch.id)).all()).toHaveLength(1);
    // Nothing is read back out of the audit log: without the commit's entry the undo still removes them.
    db().$client.prepare("delete from audit_log where action = 'upload.commit' and entity_id = ?").run(batch.publicId);
    const committed = db().select().from(uploadBatches).where(eq(uploadBatches.id, batch.id)).get()!;
    undoUpload(db(), committed, { userId });
    expect({ sites: count("sites"), samples: count("samples") }).toEqual(before);
  });
});

describe("2b. undo takes out the publications an upload stored", () => {
  const paperRows = (p: string, doi: string) =>
    rowsAt(3, p).map((r) => ({ ...r, doi, pub_title: `Invented ages of the ${p} fjords`, pub_year: 2024 }));

  it("a paper first cited by the upload goes with it; one cited before is untouched", async () => {
    const p = prefix();
    const known = db().$client.prepare("select count(*) from publications").pluck().get() as number;
    const { batch, userId } = await upload(paperRows(p, `10.99999/thawline.undo.${p}`));
    commitUpload(db(), batch, "all", { userId });
    const stored = db().select().from(publications).where(eq(publications.createdInBatchId, batch.id)).all();
    expect(stored.map((s) => s.doi)).toEqual([`10.99999/thawline.undo.${p}`]);
    // The rows' shared test paper (TEST_CITATION) is not re-created: only the new DOI is this batch's.
    const committed = db().select().from(uploadBatches).where(eq(uploadBatches.id, batch.id)).get()!;
    undoUpload(db(), committed, { userId });
    expect(db().select().from(publications).where(eq(publications.id, stored[0]!.id)).get()).toBeUndefined();
    expect(db().$client.prepare("select count(*) from publications").pluck().get()).toBe(known);
    const entry = db()
      .$client.prepare("select after from audit_log where action = 'upload.undo' and entity_id = ?")
      .pluck()
      .get(batch.publicId) as string;
    expect(JSON.parse(entry).removedPublicationIds).toEqual([stored[0]!.id]);
  });

  it("a paper the upload stored stays when a determination outside the upload has come to cite it", async () => {
    const p = prefix();
    const { batch, userId } = await upload(paperRows(p, `10.99999/thawline.kept.${p}`));
    commitUpload(db(), batch, "all", { userId });
    const paper = db().select().from(publications).where(eq(publications.createdInBatchId, batch.id)).get()!;
    const other = createTestDetermination(db());
    db().$client.prepare("update determinations set publication_id = ? where id = ?").run(paper.id, other.id);
    const committed = db().select().from(uploadBatches).where(eq(uploadBatches.id, batch.id)).get()!;
    undoUpload(db(), committed, { userId });
    expect(db().select().from(publications).where(eq(publications.id, paper.id)).get()?.doi).toBe(paper.doi);
  });
});

describe("3. every problem of every row at once", () => {
  it("reports the lab problem beside an unknown curve and beside a negative error", async () => {
    const p = prefix();
    const rows: Cells[] = rowsAt(3, p).map((r, i) => ({ ...r, lab_name: null, lab_code: `${4000 + i}` }));
    rows[0] = { ...rows[0], curve: "intcal99" };
    rows[1] = { ...rows[1], c14_error: -40 };
    const { validation } = await upload(rows);
    expect(at(validation, 2, "curve")[0]).toMatch(/intcal99/);
    expect(at(validation, 2, "lab_name")[0]).toMatch(/lab_name/);
    expect(at(validation, 3, "c14_error")[0]).toMatch(/greater than zero/);
    expect(at(validation, 3, "lab_name")[0]).toMatch(/lab_name/);
    expect(at(validation, 4, "lab_name")[0]).toMatch(/lab_name/);
  });

  it("reports an age beyond the curve beside a problem in another column", async () => {
    const [row] = rowsAt(1, prefix());
    const { validation } = await upload([{ ...row, c14_age: 60000, latitude: 95 }]);
    expect(at(validation, 2, "latitude")).toHaveLength(1);
    expect(at(validation, 2, "c14_age")[0]).toMatch(/curve/i);
  });
});

describe("4. a contributor without a lab", () => {
  it("registers an unknown code prefix as an unconfirmed lab, with a warning on the row", async () => {
    const p = prefix();
    const rows = rowsAt(2, p).map((r) => ({ ...r, lab_name: null }));
    const { batch, validation, userId } = await upload(rows);
    expect(validation.errors).toEqual([]);
    expect(validation.validCount).toBe(2);
    expect(validation.warnings.filter((w) => w.column === "lab_code")[0]?.message).toMatch(new RegExp(`${p}.*unconfirmed`));
    expect(validation.preview.newLabs).toEqual([`Laboratory ${p}`]);
    commitUpload(db(), batch, "all", { userId });
    const lab = db().select().from(labs).where(eq(labs.codePrefix, p)).get()!;
    expect(lab.confirmed).toBe(false);
    expect(lab.registeredBy).toBe(userId);
  });

  it("takes the contributor's own lab, and warns when the code's prefix belongs to another lab", async () => {
    const own = createTestLab(db());
    const other = createTestLab(db());
    const user = createTestUser(db());
    db().$client.prepare("update users set lab_id = ? where id = ?").run(own.id, user.id);
    const rows = rowsAt(1, other.codePrefix).map((r) => ({ ...r, lab_name: null }));
    const { batch, validation } = await upload(rows, user.id);
    expect(validation.validCount).toBe(1);
    const warning = validation.warnings.find((w) => w.column === "lab_code")?.message;
    expect(warning).toContain(other.name);
    expect(warning).toContain(own.name);
    const { determinationIds } = commitUpload(db(), batch, "all", { userId: user.id });
    expect(db().$client.prepare("select lab_id from determinations where id = ?").pluck().get(determinationIds[0])).toBe(own.id);
  });
});

describe("4. the editor's page of unconfirmed labs", () => {
  async function registered() {
    const p = prefix();
    const rows = rowsAt(2, p).map((r) => ({ ...r, lab_name: null }));
    const { batch, userId } = await upload(rows);
    commitUpload(db(), batch, "all", { userId });
    return db().select().from(labs).where(eq(labs.codePrefix, p)).get()!;
  }
  const audits = (action: string, id: number) =>
    db().$client.prepare("select count(*) from audit_log where action = ? and entity_id = ?").pluck().get(action, String(id));

  it("lists a registered lab, and confirms it with a corrected name (audited)", async () => {
    const lab = await registered();
    const editor = await personWithSession(["editor"]);
    const page = await run(() => labsPage.loader(args(get("/labs", { cookie: editor.cookie }))));
    const listed = (page.data as { labs: { id: number; determinations: number }[] }).labs.find((l) => l.id === lab.id);
    expect(listed?.determinations).toBe(2);
    const out = await run(() =>
      labsPage.action(
        args(
          post(
            "/labs",
            { intent: "confirm", labId: String(lab.id), name: "Frostmere Confirmed Lab", codePrefix: lab.codePrefix },
            { cookie: editor.cookie },
          ),
        ),
      ),
    );
    expect(out.status).toBe(302);
    expect(db().select().from(labs).where(eq(labs.id, lab.id)).get()).toMatchObject({
      confirmed: true,
      name: "Frostmere Confirmed Lab",
    });
    expect(audits("lab.confirm", lab.id)).toBe(1);
  });

  it("merges a registered lab into another: its determinations move, the lab goes (audited)", async () => {
    const lab = await registered();
    const target = createTestLab(db());
    const editor = await personWithSession(["editor"]);
    const out = await run(() =>
      labsPage.action(
        args(post("/labs", { intent: "merge", labId: String(lab.id), intoId: String(target.id) }, { cookie: editor.cookie })),
      ),
    );
    expect(out.status).toBe(302);
    expect(db().select().from(labs).where(eq(labs.id, lab.id)).get()).toBeUndefined();
    expect(db().$client.prepare("select count(*) from determinations where lab_id = ?").pluck().get(target.id)).toBe(2);
    expect(audits("lab.merge", lab.id)).toBe(1);
    const again = await run(() =>
      labsPage.action(
        args(post("/labs", { intent: "merge", labId: String(lab.id), intoId: String(target.id) }, { cookie: editor.cookie })),
      ),
    );
    expect(again.status).toBe(404);
  });
});

describe("5. lab codes are unique without regard to case", () => {
  it("refuses abc-1 in the database when ABC-1 is there", () => {
    const p = prefix();
    createTestDetermination(db(), { labCode: `${p}-1` });
    expect(() => createTestDetermination(db(), { labCode: `${p.toLowerCase()}-1` })).toThrow(/UNIQUE/);
  });
});

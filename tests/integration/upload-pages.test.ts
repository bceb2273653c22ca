// What the upload and determination pages tell a contributor (issue 13, uploads): cautions folded
// per column and kind, the list of what a commit created, and the Edit link on a determination
// its contributor may still change.
import { describe, expect, it } from "vitest";
import { getDb } from "#app/db/client.server.ts";
import { createUpload } from "#app/models/submission/uploads/batches.server.ts";
import { commitUpload } from "#app/models/submission/uploads/commit.server.ts";
import * as uploadPage from "#app/routes/contribute/upload.tsx";
import * as determinationPage from "#app/routes/explore/determination.tsx";
import { args, get, personWithSession, run } from "#tests/support/auth.ts";
import { toCsvText, uploadRows, type Cells } from "#tests/support/upload-files.ts";

const db = () => getDb();
let n = 0;

async function uploaded(rows = uploadRows(10, { prefix: `UPG${++n}Q` })) {
  const person = await personWithSession(["contributor"]);
  const { batch } = await createUpload(db(), { userId: person.id, fileName: "page.csv", file: Buffer.from(toCsvText(rows)) });
  return { person, batch };
}

type UploadData = {
  cautions: { column: string; message: string; rows: number[] }[];
  created: {
    rows: { id: number; labCode: string; medianCalBp: number | null; hpd95FromBp: number | null }[];
    total: number;
  } | null;
};

const page = async (cookie: string, publicId: string) =>
  (await run(() => uploadPage.loader(args(get(`/uploads/${publicId}`, { cookie }), { publicId })))).data as UploadData;

describe("the upload page", () => {
  it("folds the same caution on many rows into one, naming its rows", async () => {
    const rows: Cells[] = uploadRows(10, { prefix: `UPG${++n}Q` }).map((r) =>
      r.method === "luminescence" ? { ...r, c14_age: 9000, c14_error: 40, d13c: -25 } : { ...r },
    );
    const lumRows = rows.flatMap((r, i) => (r.method === "luminescence" ? [i + 2] : []));
    const { person, batch } = await uploaded(rows);
    const { cautions } = await page(person.cookie, batch.publicId);
    const notStored = cautions.filter((c) => /not stored/.test(c.message));
    expect(notStored).toHaveLength(1);
    expect(notStored[0]!.message).toBe(
      "3 columns are not used for a luminescence row and are not stored: c14_age, c14_error, d13c.",
    );
    expect(notStored[0]!.rows).toEqual(lumRows);
  });

  it("lists what a commit created: lab codes with their calendar ages", async () => {
    const rows = uploadRows(5, { prefix: `UPG${++n}Q` });
    const { person, batch } = await uploaded(rows);
    expect((await page(person.cookie, batch.publicId)).created).toBeNull();
    const { determinationIds } = commitUpload(db(), batch, "all", { userId: person.id });
    const { created } = await page(person.cookie, batch.publicId);
    expect(created!.total).toBe(5);
    expect(created!.rows.map((r) => r.id)).toEqual(determinationIds);
    expect(created!.rows.map((r) => r.labCode)).toEqual(rows.map((r) => r.lab_code));
    const stored = db()
      .$client.prepare("select median_cal_bp from calibrations where determination_id = ? and is_current = 1")
      .pluck();
    for (const r of created!.rows) {
      expect(r.medianCalBp).toBe(stored.get(r.id));
      expect(r.medianCalBp).toBeGreaterThan(0);
    }
  });
});

describe("the determination page", () => {
  it("offers its contributor an Edit link until it is graded, and nobody else", async () => {
    const { person, batch } = await uploaded(uploadRows(1, { prefix: `UPG${++n}Q` }));
    const [id] = commitUpload(db(), batch, "all", { userId: person.id }).determinationIds;
    const editable = async (cookie: string) =>
      (
        (await run(() => determinationPage.loader(args(get(`/determinations/${id}`, { cookie }), { id: String(id) })))).data as {
          editable: boolean;
        }
      ).editable;
    expect(await editable(person.cookie)).toBe(true);
    const other = await personWithSession(["contributor", "reviewer"]);
    expect(await editable(other.cookie)).toBe(false);
    db().$client.prepare("update determinations set status = 'graded', grade = 2 where id = ?").run(id);
    expect(await editable(person.cookie)).toBe(false);
  });
});

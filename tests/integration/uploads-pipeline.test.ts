import { eq } from "drizzle-orm";
import { describe, expect, it } from "vitest";
import { getDb } from "#app/db/client.server.ts";
import { determinations, labs, uploadBatches } from "#app/db/schema.ts";
import { checkFileSize, readUpload, UploadError } from "#app/models/submission/uploads/read-sheet.server.ts";
import { commitUpload, CommitRefused } from "#app/models/submission/uploads/commit.server.ts";
import { createUpload, remapUpload } from "#app/models/submission/uploads/batches.server.ts";
import { guessMapping, normaliseHeader } from "#app/models/submission/uploads/mapping.server.ts";
import { undoUpload } from "#app/models/submission/uploads/undo.server.ts";
import { createTestDetermination, createTestUser } from "#tests/factories.ts";
import { toCsvText, toXlsx, uploadRows, type Cells } from "#tests/support/upload-files.ts";

const db = () => getDb();
let fileNo = 0;
const prefix = () => `ZP${++fileNo}Q`;

function counts() {
  const c = (t: string) => db().$client.prepare(`select count(*) from ${t}`).pluck().get() as number;
  return {
    determinations: c("determinations"),
    sites: c("sites"),
    samples: c("samples"),
    audit_log: c("audit_log"),
    calibrations: c("calibrations"),
    labs: c("labs"),
    publications: c("publications"),
  };
}

async function upload(rows: Cells[], kind: "csv" | "xlsx" = "csv", userId = createTestUser(db()).id) {
  const file = kind === "csv" ? Buffer.from(toCsvText(rows)) : await toXlsx(rows);
  const { batch, validation } = await createUpload(db(), { userId, fileName: `test.${kind}`, file });
  return { batch, validation, userId };
}

function errorAt(v: { errors: { row: number; column: string; message: string }[] }, row: number, column: string) {
  const e = v.errors.find((x) => x.row === row && x.column === column);
  if (!e) throw new Error(`no error at row ${row}, ${column}: ${JSON.stringify(v.errors)}`);
  return e.message;
}

describe("reading files", () => {
  it("reads CSV with and without a BOM, and Latin-1 with a notice rather than an error", async () => {
    const text = toCsvText(uploadRows(2, { prefix: prefix() }).map((r) => ({ ...r, site_name: "Fjærdalen Øst" })));
    const plain = await readUpload(Buffer.from(text), "a.csv");
    const bom = await readUpload(Buffer.concat([Buffer.from([0xef, 0xbb, 0xbf]), Buffer.from(text)]), "a.csv");
    expect(plain.headers[0]).toBe("site_name");
    expect(bom.headers[0]).toBe("site_name");
    expect(plain.notices).toEqual([]);
    const latin1 = await readUpload(Buffer.from(text, "latin1"), "a.csv");
    expect(latin1.notices.join(" ")).toMatch(/not UTF-8.*Latin-1/);
    expect(latin1.rows[0]!.cells[0]).toBe("Fjærdalen Øst");
  });

  it("refuses files that are not spreadsheets, each with a clear message", async () => {
    await expect(readUpload(Buffer.from("%PDF-1.7 something"), "a.csv")).rejects.toThrow(/not a spreadsheet.*PDF/);
    await expect(readUpload(Buffer.from([0xd0, 0xcf, 0x11, 0xe0, 1, 2, 3]), "a.xls")).rejects.toThrow(/old-style Excel/);
    await expect(readUpload(Buffer.from([0, 1, 2, 3, 0, 0, 5, 6, 7, 8, 0, 0]), "a.csv")).rejects.toThrow(/binary data/);
    await expect(readUpload(Buffer.from("hello"), "a.xlsx")).rejects.toThrow(/not an Excel workbook/);
    await expect(readUpload(Buffer.from([0x50, 0x4b, 0x03, 0x04, 9, 9, 9, 9]), "a.xlsx")).rejects.toThrow(
      /could not be read as an Excel workbook/,
    );
    await expect(readUpload(Buffer.from(""), "a.csv")).rejects.toThrow(/empty/);
    await expect(readUpload(Buffer.from("site_name,latitude\r\n\r\n"), "a.csv")).rejects.toThrow(/no data rows/);
  });

  it("states the size limit", () => {
    expect(() => checkFileSize(11 * 1024 * 1024, 10 * 1024 * 1024)).toThrow(/11\.0 MB; the limit is 10\.0 MB/);
    let refused: unknown;
    try {
      checkFileSize(2, 1);
    } catch (e) {
      refused = e;
    }
    expect(refused).toBeInstanceOf(UploadError);
    expect((refused as UploadError).status).toBe(413);
  });

  it("guesses mappings from headers with units, case and synonyms", () => {
    expect(normaliseHeader("Depth (cm)")).toBe("depth");
    const m = guessMapping(["Site", "Lat", "Longitude [DD]", "14C age (yr BP)", "Error", "Lab No.", "Mystery"]);
    expect(m).toEqual({
      Site: "site_name",
      Lat: "latitude",
      "Longitude [DD]": "longitude",
      "14C age (yr BP)": "c14_age",
      Error: "c14_error",
      "Lab No.": "lab_code",
      Mystery: "",
    });
    expect(guessMapping(["Mystery"], { Mystery: "notes" })).toEqual({ Mystery: "notes" });
  });
});

describe("validation of an upload", () => {
  it("stores a good file as parsed without touching the registry", async () => {
    const before = counts();
    for (const kind of ["csv", "xlsx"] as const) {
      const { batch, validation } = await upload(uploadRows(30, { prefix: prefix() }), kind);
      expect(validation.errors).toEqual([]);
      expect(batch.status).toBe("parsed");
      expect(batch.rowCount).toBe(30);
      expect(batch.validCount).toBe(30);
      expect(validation.preview).toMatchObject({ determinations: 30, newSites: 5, newSamples: 16 });
    }
    expect(counts()).toEqual(before);
  });

  it("gives every bad input its own message at its row and column (CSV)", async () => {
    const existing = createTestDetermination(db(), { labCode: `${prefix()}-EXISTING` });
    const rows = uploadRows(60, { prefix: prefix() })
      .filter((r) => r.material === "plant macrofossil")
      .slice(0, 16);
    const set = (i: number, over: Cells) => Object.assign(rows[i]!, over);
    const at = [1, 2, 3, 4, 5, 6, 7, 8, 9, 10, 11];
    set(at[0]!, { c14_age: "10,5" });
    set(at[1]!, { c14_error: "45 yr" });
    set(at[2]!, { c14_age: "12 ka" });
    set(at[3]!, { c14_age: "2020-05-04" });
    set(at[4]!, { latitude: -64.2, longitude: 58.5 });
    set(at[5]!, { c14_error: -40 });
    set(at[6]!, { c14_age: 60000, c14_error: 500 });
    set(at[7]!, { lab_code: existing.labCode });
    set(at[8]!, { material: "plant macrofosil" });
    set(at[9]!, { curve: "intcal2O" });
    set(at[10]!, { lab_code: rows[0]!.lab_code });
    const { validation } = await upload(rows);
    const row = (i: number) => i + 2; // header is row 1
    expect(errorAt(validation, row(at[0]!), "c14_age")).toContain("use a point as the decimal separator");
    expect(errorAt(validation, row(at[1]!), "c14_error")).toMatch(/plain number in ¹⁴C yr.*leave the unit out/);
    expect(errorAt(validation, row(at[2]!), "c14_age")).toContain("12 ka is 12000 years");
    expect(errorAt(validation, row(at[3]!), "c14_age")).toContain("is a date");
    expect(errorAt(validation, row(at[4]!), "latitude")).toContain("look swapped");
    expect(errorAt(validation, row(at[5]!), "c14_error")).toContain("must be greater than zero");
    expect(errorAt(validation, row(at[6]!), "c14_age")).toContain("beyond the curve");
    expect(errorAt(validation, row(at[7]!), "lab_code")).toContain(`/determinations/${existing.id}`);
    expect(errorAt(validation, row(at[8]!), "material")).toContain('did you mean "plant macrofossil"');
    expect(errorAt(validation, row(at[9]!), "curve")).toContain("did you mean intcal20");
    expect(errorAt(validation, row(at[10]!), "lab_code")).toContain("also appears in row 2");
    // One message per problem: each bad row has exactly one error.
    expect(validation.errors).toHaveLength(11);
    expect(validation.validCount).toBe(16 - 11);
  });

  it("reports formula cells and date cells in XLSX, and numbers rows as the spreadsheet does", async () => {
    const rows = uploadRows(4, { prefix: prefix() });
    rows[1]!.c14_age = { formula: "1000*9", result: 9000 };
    rows[1]!.material = "plant macrofossil";
    rows[1]!.method = "radiocarbon";
    rows[2]!.latitude = new Date(Date.UTC(2020, 4, 4));
    const file = await toXlsx(rows);
    const { validation } = await createUpload(db(), { userId: createTestUser(db()).id, fileName: "f.xlsx", file });
    expect(errorAt(validation, 3, "c14_age")).toContain("Formula cells are not accepted; paste values");
    expect(errorAt(validation, 4, "latitude")).toContain("holds a date");
  });

  it("skips blank rows silently and keeps spreadsheet row numbers", async () => {
    const rows = uploadRows(3, { prefix: prefix() });
    const text = toCsvText(rows).split("\r\n");
    text.splice(2, 0, ",,,,", ""); // blank rows become rows 3 and 4
    const bad = text[5]!.replace(/,minimum,/, ",sometimes,");
    text[5] = bad;
    const { validation } = await createUpload(db(), {
      userId: createTestUser(db()).id,
      fileName: "b.csv",
      file: Buffer.from(text.join("\r\n")),
    });
    expect(validation.results.map((r) => r.n)).toEqual([2, 5, 6]);
    expect(errorAt(validation, 6, "constraint_kind")).toContain("minimum, maximum or direct");
  });

  it("re-validates with a changed mapping and remembers it for the lab", async () => {
    const lab = db().insert(labs).values({ name: "Remembering Lab", codePrefix: "ZRM" }).returning().get();
    const user = createTestUser(db());
    db().$client.prepare("update users set lab_id = ? where id = ?").run(lab.id, user.id);
    const rows = uploadRows(3, { prefix: prefix() });
    const headers = [
      "site_name",
      "latitude",
      "longitude",
      "sample_code",
      "material",
      "method",
      "lab_code",
      "lab_name",
      "constraint_kind",
      "c14_age",
      "c14_error",
      "curve",
      "Mystery",
      "delta_r",
      "delta_r_error",
      "delta_r_curve",
      "de_gy",
      "de_error_gy",
      "dose_rate_gy_per_ka",
      "dose_rate_error_gy_per_ka",
      "measurement_year",
    ];
    const file = Buffer.from(
      toCsvText(
        rows.map((r) => ({ ...r, Mystery: r.doi })),
        headers,
      ),
    );
    const { batch } = await createUpload(db(), { userId: user.id, fileName: "m.csv", file });
    expect(batch.mapping!.Mystery).toBe("");
    remapUpload(db(), batch, { ...batch.mapping, Mystery: "doi" });
    expect(db().select().from(labs).where(eq(labs.id, lab.id)).get()!.lastMapping!.Mystery).toBe("doi");
    const again = await createUpload(db(), { userId: user.id, fileName: "m2.csv", file });
    expect(again.batch.mapping!.Mystery).toBe("doi");
  });
});

describe("committing", () => {
  it("commits all rows of a good file in one go, calibrated, audited, with sites and samples", async () => {
    const p = prefix();
    // Sites of its own, so the counts hold whichever tests ran before in this file's database.
    const fileRows = uploadRows(24, { prefix: p }).map((r) => ({ ...r, site_name: `${p} ${String(r.site_name)}` }));
    const { batch, userId } = await upload(fileRows, "xlsx");
    const before = counts();
    const result = commitUpload(db(), batch, "all", { userId });
    expect(result.committed).toBe(24);
    const after = counts();
    expect(after.determinations - before.determinations).toBe(24);
    expect(after.calibrations - before.calibrations).toBe(24);
    expect(after.sites - before.sites).toBe(4);
    expect(after.samples - before.samples).toBe(14);
    const rows = db().select().from(determinations).where(eq(determinations.uploadBatchId, batch.id)).all();
    expect(rows.every((r) => r.status === "submitted" && r.contributorId === userId)).toBe(true);
    const cal = db()
      .$client.prepare(
        `select count(*) from calibrations where determination_id in (${result.determinationIds.join(",")}) and median_cal_bp is not null`,
      )
      .pluck()
      .get();
    expect(cal).toBe(24);
    expect(db().select().from(uploadBatches).where(eq(uploadBatches.id, batch.id)).get()!.status).toBe("committed");
    expect(() => commitUpload(db(), { ...batch, status: "committed" }, "all", { userId })).toThrow(CommitRefused);
  });

  it("does not store a column that belongs to the other method, and warns about it", async () => {
    const rows = uploadRows(10, { prefix: prefix() });
    const lumIndex = rows.findIndex((r) => r.method === "luminescence");
    rows[lumIndex] = { ...rows[lumIndex], c14_age: 9500, d13c: -25 };
    const { batch, userId, validation } = await upload(rows);
    expect(validation.errors).toEqual([]);
    const result = commitUpload(db(), batch, "all", { userId });
    const stored = db()
      .select()
      .from(determinations)
      .where(eq(determinations.labCode, String(rows[lumIndex]!.lab_code)))
      .get()!;
    expect(result.determinationIds).toContain(stored.id);
    expect(stored.method).toBe("luminescence");
    expect(stored.c14AgeYr).toBeNull();
    expect(stored.d13cPermil).toBeNull();
    expect(stored.deGy).toBe(rows[lumIndex]!.de_gy);
  });

  it("refuses mode all with errors (409, nothing written) and commits the valid rows only on request", async () => {
    const rows = uploadRows(10, { prefix: prefix() });
    rows[3]!.latitude = "95";
    const { batch, userId } = await upload(rows);
    const before = counts();
    let refused: unknown;
    try {
      commitUpload(db(), batch, "all", { userId });
    } catch (e) {
      refused = e;
    }
    expect(refused).toBeInstanceOf(CommitRefused);
    expect((refused as CommitRefused).status).toBe(409);
    expect(counts()).toEqual(before);
    const result = commitUpload(db(), batch, "valid_only", { userId });
    expect(result.committed).toBe(9);
    expect(counts().determinations - before.determinations).toBe(9);
  });

  it("leaves the registry exactly as it was when the commit fails midway", async () => {
    const { batch, userId } = await upload(uploadRows(40, { prefix: prefix() }), "xlsx");
    const before = counts();
    expect(() =>
      commitUpload(
        db(),
        batch,
        "all",
        { userId },
        {
          afterRow: (i) => {
            if (i === 20) throw new Error("injected failure");
          },
        },
      ),
    ).toThrow("injected failure");
    expect(counts()).toEqual(before);
    expect(db().select().from(uploadBatches).where(eq(uploadBatches.id, batch.id)).get()!.status).toBe("parsed");
    // The same batch still commits afterwards.
    expect(commitUpload(db(), batch, "all", { userId }).committed).toBe(40);
  });

  it("reuses a site by name within ~100 m and a sample by site and code", async () => {
    const first = uploadRows(6, { prefix: prefix() });
    const a = await upload(first);
    commitUpload(db(), a.batch, "all", { userId: a.userId });
    const second = uploadRows(6, { prefix: prefix() }).map((r) => ({ ...r, latitude: Number(r.latitude) + 0.0003 }));
    const b = await upload(second);
    expect(b.validation.preview).toMatchObject({ newSites: 0, existingSites: 1, newSamples: 0, existingSamples: 3 });
    const before = counts();
    commitUpload(db(), b.batch, "all", { userId: b.userId });
    expect(counts().sites).toBe(before.sites);
    expect(counts().samples).toBe(before.samples);
  });

  it("undoes an untouched batch completely, and refuses once a reviewer has graded", async () => {
    const before = counts();
    const { batch, userId } = await upload(uploadRows(12, { prefix: prefix() }));
    commitUpload(db(), batch, "all", { userId });
    const committed = db().select().from(uploadBatches).where(eq(uploadBatches.id, batch.id)).get()!;
    const { removed } = undoUpload(db(), committed, { userId });
    expect(removed).toBe(12);
    const after = counts();
    expect({ ...after, audit_log: 0, labs: 0, publications: 0 }).toEqual({ ...before, audit_log: 0, labs: 0, publications: 0 });
    expect(after.audit_log).toBeGreaterThan(before.audit_log); // creation, deletion and undo are all on record
    expect(db().select().from(uploadBatches).where(eq(uploadBatches.id, batch.id)).get()!.status).toBe("undone");

    const other = await upload(uploadRows(3, { prefix: prefix() }));
    const r = commitUpload(db(), other.batch, "all", { userId: other.userId });
    const reviewer = createTestUser(db(), ["reviewer"]);
    db()
      .$client.prepare("insert into reviews (determination_id, reviewer_id, grade) values (?, ?, 2)")
      .run(r.determinationIds[0], reviewer.id);
    const c2 = db().select().from(uploadBatches).where(eq(uploadBatches.id, other.batch.id)).get()!;
    expect(() => undoUpload(db(), c2, { userId: other.userId })).toThrow(/reviewer has already graded/);
    expect(() => undoUpload(db(), c2, { userId: userId })).toThrow(CommitRefused);
  });
});

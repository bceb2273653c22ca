import { describe, expect, it } from "vitest";
import { readOutbox } from "#seed/mail-fake.ts";
import { getDb } from "#app/db/client.server.ts";
import { createToken } from "#app/models/accounts/tokens.server.ts";
import * as uploadsApi from "#app/routes/api/v1/uploads.ts";
import * as commitApi from "#app/routes/api/v1/uploads.commit.ts";
import * as determinationsApi from "#app/routes/api/v1/determinations.ts";
import * as uploadFile from "#app/routes/resources/upload-file.ts";
import * as uploadsPage from "#app/routes/contribute/uploads.tsx";
import * as uploadPage from "#app/routes/contribute/upload.tsx";
import * as errorsCsv from "#app/routes/resources/upload-errors-csv.ts";
import * as templateXlsx from "#app/routes/resources/upload-template-xlsx.ts";
import * as templateCsv from "#app/routes/resources/upload-template-csv.ts";
import { readUpload } from "#app/models/submission/uploads/read-sheet.server.ts";
import { createUpload } from "#app/models/submission/uploads/batches.server.ts";
import { createTestUser } from "#tests/factories.ts";
import { args, get, ORIGIN, personWithSession, post, run } from "#tests/support/auth.ts";
import { toCsvText, toXlsx, uploadRows } from "#tests/support/upload-files.ts";
import { useMailFake } from "#tests/support/mail-fake.ts";

const fake = useMailFake("uploads");

let n = 0;
const prefix = () => `ZA${++n}Q`;

function tokenFor(roles: ("contributor" | "modeller" | "reviewer")[] = ["contributor"]) {
  const user = createTestUser(getDb(), roles);
  return { ...user, token: createToken(getDb(), user.id, "test", { actorId: user.id }).token };
}

function multipart(path: string, file: Buffer | null, name: string, token?: string, headers: Record<string, string> = {}) {
  const body = new FormData();
  if (file) body.append("file", new Blob([new Uint8Array(file)]), name);
  return new Request(`${ORIGIN}${path}`, {
    method: "POST",
    body,
    headers: { ...(token ? { Authorization: `Bearer ${token}` } : {}), ...headers },
  });
}

function jsonPost(path: string, body: unknown, token?: string) {
  return new Request(`${ORIGIN}${path}`, {
    method: "POST",
    body: JSON.stringify(body),
    headers: { "Content-Type": "application/json", ...(token ? { Authorization: `Bearer ${token}` } : {}) },
  });
}

const count = () => getDb().$client.prepare("select count(*) from determinations").pluck().get() as number;

describe("POST /api/v1/uploads and /commit", () => {
  it("answers with the documented shape, writes nothing, and commits in either mode", async () => {
    const person = tokenFor();
    const rows = uploadRows(8, { prefix: prefix() });
    rows[2]!.c14_error = -5;
    rows[2]!.material = "plant macrofossil";
    rows[2]!.method = "radiocarbon";
    rows[2]!.c14_age = 9000;
    const before = count();
    const up = await run(() =>
      uploadsApi.action(args(multipart("/api/v1/uploads", Buffer.from(toCsvText(rows)), "r.csv", person.token))),
    );
    expect(up.status).toBe(200);
    const body = up.data as {
      upload_id: string;
      rows: number;
      valid: number;
      errors: { row: number; column: string; message: string }[];
    };
    expect(Object.keys(body).sort()).toEqual(["errors", "rows", "upload_id", "valid", "warnings"]);
    expect(body).toMatchObject({ rows: 8, valid: 7 });
    expect(body.errors).toEqual([{ row: 4, column: "c14_error", message: expect.stringContaining("must be greater than zero") }]);
    expect(count()).toBe(before);

    const commitReq = (mode: unknown, token = person.token, id = body.upload_id) =>
      run(() => commitApi.action(args(jsonPost(`/api/v1/uploads/${id}/commit`, { mode }, token), { uploadId: id })));
    const refused = await commitReq("all");
    expect(refused.status).toBe(409);
    expect(count()).toBe(before);
    expect((await commitReq("everything")).status).toBe(400);
    const other = tokenFor();
    expect((await commitReq("valid_only", other.token)).status).toBe(404);
    expect((await commitReq("valid_only", person.token, "no-such-upload")).status).toBe(404);
    const ok = await commitReq("valid_only");
    expect(ok.status).toBe(200);
    const done = ok.data as { committed: number; determination_ids: number[] };
    expect(Object.keys(done).sort()).toEqual(["committed", "determination_ids"]);
    expect(done.committed).toBe(7);
    expect(done.determination_ids).toHaveLength(7);
    expect(count()).toBe(before + 7);
    expect((await commitReq("valid_only")).status).toBe(409);
  });

  it("accepts XLSX and commits mode all when there are no errors", async () => {
    const person = tokenFor();
    const file = await toXlsx(uploadRows(5, { prefix: prefix() }));
    const up = await run(() => uploadsApi.action(args(multipart("/api/v1/uploads", file, "r.xlsx", person.token))));
    const id = (up.data as { upload_id: string }).upload_id;
    expect(up.data).toMatchObject({ rows: 5, valid: 5, errors: [] });
    const ok = await run(() =>
      commitApi.action(args(jsonPost(`/api/v1/uploads/${id}/commit`, { mode: "all" }, person.token), { uploadId: id })),
    );
    expect(ok.status).toBe(200);
    expect((ok.data as { committed: number }).committed).toBe(5);
  });

  it("needs a token (401) with the contributor role (403)", async () => {
    const file = Buffer.from(toCsvText(uploadRows(1, { prefix: prefix() })));
    expect((await run(() => uploadsApi.action(args(multipart("/api/v1/uploads", file, "r.csv"))))).status).toBe(401);
    const modeller = tokenFor(["modeller"]);
    expect((await run(() => uploadsApi.action(args(multipart("/api/v1/uploads", file, "r.csv", modeller.token))))).status).toBe(
      403,
    );
    expect(
      (
        await run(() =>
          commitApi.action(args(jsonPost("/api/v1/uploads/x/commit", { mode: "all" }, modeller.token), { uploadId: "x" })),
        )
      ).status,
    ).toBe(403);
    expect((await run(() => determinationsApi.action(args(jsonPost("/api/v1/determinations", [], undefined))))).status).toBe(401);
    expect(
      (await run(() => determinationsApi.action(args(jsonPost("/api/v1/determinations", [{}], modeller.token))))).status,
    ).toBe(403);
  });

  it("refuses a file over the size limit with the limit stated, and a non-spreadsheet", async () => {
    const person = tokenFor();
    const big = Buffer.alloc(10 * 1024 * 1024 + 10, "a");
    const tooBig = await run(() => uploadsApi.action(args(multipart("/api/v1/uploads", big, "big.csv", person.token))));
    expect(tooBig.status).toBe(413);
    expect((tooBig.data as { error: string }).error).toContain("the limit is 10.0 MB");
    const pdf = await run(() =>
      uploadsApi.action(args(multipart("/api/v1/uploads", Buffer.from("%PDF-1.4 x"), "a.csv", person.token))),
    );
    expect(pdf.status).toBe(400);
    expect((pdf.data as { error: string }).error).toContain("not a spreadsheet");
    const none = await run(() => uploadsApi.action(args(multipart("/api/v1/uploads", null, "", person.token))));
    expect(none.status).toBe(400);
  });
});

describe("POST /api/v1/determinations", () => {
  it("creates every row (201) or none with per-item errors (400)", async () => {
    const person = tokenFor();
    const rows = uploadRows(4, { prefix: prefix() });
    const before = count();
    const bad = rows.map((r, i) => (i === 2 ? { ...r, latitude: 123 } : r));
    const refused = await run(() => determinationsApi.action(args(jsonPost("/api/v1/determinations", bad, person.token))));
    expect(refused.status).toBe(400);
    expect(refused.data).toEqual({
      errors: [{ index: 2, row: 3, column: "latitude", message: expect.stringContaining("outside −90 to 90") }],
      warnings: expect.any(Array),
    });
    expect(count()).toBe(before);
    const created = await run(() => determinationsApi.action(args(jsonPost("/api/v1/determinations", rows, person.token))));
    expect(created.status).toBe(201);
    const ids = (created.data as { determination_ids: number[] }).determination_ids;
    expect(ids).toHaveLength(4);
    expect(count()).toBe(before + 4);
    const again = await run(() =>
      determinationsApi.action(args(jsonPost("/api/v1/determinations", rows.slice(0, 1), person.token))),
    );
    expect(again.status).toBe(400);
    expect(JSON.stringify(again.data)).toContain(`/determinations/${ids[0]}`);
    const notArray = await run(() => determinationsApi.action(args(jsonPost("/api/v1/determinations", { a: 1 }, person.token))));
    expect(notArray.status).toBe(400);
    const unknown = await run(() =>
      determinationsApi.action(
        args(jsonPost("/api/v1/determinations", [{ ...rows[0], lab_code: "ZZU-1", colour: "red" }], person.token)),
      ),
    );
    expect(unknown.data).toEqual({
      warnings: [],
      errors: [{ index: 0, row: 1, column: "colour", message: 'Unknown field "colour".' }],
    });
  });
});

describe("upload pages", () => {
  it("upload, see errors, re-map, commit the valid rows, download errors, undo", async () => {
    const p = await personWithSession(["contributor"]);
    const rows = uploadRows(6, { prefix: prefix() });
    rows[1]!.c14_age = "=A1";
    rows[1]!.method = "radiocarbon";
    rows[1]!.material = "plant macrofossil";
    const req = multipart("/uploads/file", Buffer.from(toCsvText(rows)), "page.csv", undefined, {
      Cookie: p.cookie,
      Accept: "application/json",
    });
    const sent = await run(() => uploadFile.action(args(req)));
    expect(sent.status).toBe(200);
    const location = (sent.data as { location: string }).location;
    const publicId = location.split("/").pop()!;
    const page = await run(() => uploadPage.loader(args(get(location, { cookie: p.cookie }), { publicId })));
    const data = page.data as {
      errorCount: number;
      errors: { row: number; column: string; message: string }[];
      batch: { validCount: number };
    };
    expect(data.errorCount).toBe(1);
    expect(data.errors[0]).toMatchObject({
      row: 3,
      column: "c14_age",
      message: expect.stringContaining("Formula cells are not accepted"),
    });

    const csv = await run(() => errorsCsv.loader(args(get(`${location}/errors.csv`, { cookie: p.cookie }), { publicId })));
    expect(csv.headers.get("Content-Type")).toContain("text/csv");
    expect(String(csv.data)).toContain("3,c14_age,Formula cells are not accepted");

    const stranger = await personWithSession(["contributor"]);
    expect((await run(() => uploadPage.loader(args(get(location, { cookie: stranger.cookie }), { publicId })))).status).toBe(404);
    const modeller = await personWithSession(["modeller"]);
    expect((await run(() => uploadPage.loader(args(get(location, { cookie: modeller.cookie }), { publicId })))).status).toBe(403);

    const remap = await run(() =>
      uploadPage.action(args(post(location, { intent: "remap", "map.0": "site_name" }, { cookie: p.cookie }), { publicId })),
    );
    expect(remap.status).toBe(302);
    expect(
      (await run(() => uploadPage.action(args(post(location, { intent: "nonsense" }, { cookie: p.cookie }), { publicId }))))
        .status,
    ).toBe(400);
    const all = await run(() =>
      uploadPage.action(args(post(location, { intent: "commit-all" }, { cookie: p.cookie }), { publicId })),
    );
    expect(all.status).toBe(302);
    const before = count();
    // Remapping with only site_name left every other column unmapped: map them back by re-validating with the guess.
    const headers = toCsvText([]).trim().split(",");
    const form: Record<string, string> = { intent: "remap" };
    headers.forEach((h, i) => (form[`map.${i}`] = h));
    await run(() => uploadPage.action(args(post(location, form, { cookie: p.cookie }), { publicId })));
    const valid = await run(() =>
      uploadPage.action(args(post(location, { intent: "commit-valid" }, { cookie: p.cookie }), { publicId })),
    );
    expect(valid.status).toBe(302);
    expect(count()).toBe(before + 5);
    const receipt = readOutbox(fake.outboxDir).find((m) => JSON.stringify(m).includes(p.email));
    expect(receipt).toBeTruthy();
    expect(JSON.stringify(receipt)).toContain("5 determinations");
    expect(JSON.stringify(receipt)).toContain("/submissions");

    const list = await run(() => uploadsPage.loader(args(get("/uploads", { cookie: p.cookie }))));
    const batches = (list.data as { batches: { publicId: string; undoable: boolean; committedCount: number }[] }).batches;
    expect(batches.find((b) => b.publicId === publicId)).toMatchObject({ undoable: true, committedCount: 5 });
    const undo = await run(() => uploadsPage.action(args(post("/uploads", { intent: "undo", publicId }, { cookie: p.cookie }))));
    expect(undo.status).toBe(302);
    expect(count()).toBe(before);
  });

  it("serves templates that read back through the upload reader without errors", async () => {
    const p = await personWithSession(["contributor"]);
    const x = await run(() => templateXlsx.loader(args(get("/uploads/template.xlsx", { cookie: p.cookie }))));
    expect(x.status).toBe(200);
    const c = await run(() => templateCsv.loader(args(get("/uploads/template.csv", { cookie: p.cookie }))));
    expect(String(c.data).split("\r\n")[0]).toContain("site_name,latitude,longitude");
    const raw = await templateXlsx.loader(args(get("/uploads/template.xlsx", { cookie: p.cookie })));
    const sheet = await readUpload(Buffer.from(await (raw as Response).arrayBuffer()), "t.xlsx");
    expect(sheet.rows).toHaveLength(2);
    expect(sheet.headers).toContain("dose_rate_gy_per_ka");
  });

  it("refuses the template's example rows when the template is uploaded unchanged", async () => {
    const p = await personWithSession(["contributor"]);
    const csv = await run(() => templateCsv.loader(args(get("/uploads/template.csv", { cookie: p.cookie }))));
    const { validation } = await createUpload(getDb(), {
      userId: p.id,
      fileName: "template.csv",
      file: Buffer.from(String(csv.data)),
    });
    expect(validation.validCount).toBe(0);
    for (const row of [2, 3]) {
      expect(validation.errors.find((e) => e.row === row && e.column === "lab_code")?.message).toMatch(
        /is the template's example row: replace it with your own measurement, or delete the row/,
      );
      expect(validation.errors.find((e) => e.row === row && e.column === "doi")?.message).toMatch(/example DOI/);
    }
  });
});

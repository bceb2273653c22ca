// Hardening corpus, identifiers (issue 14 case 3): invisible and control characters in lab codes,
// sample codes and site names are refused with their name and position, and look-alike lab codes
// (a non-breaking hyphen, full-width letters, another case) count as the same code — through the
// upload, the token API's JSON rows and the form alike.
import { describe, expect, it } from "vitest";
import { getDb } from "#app/db/client.server.ts";
import { createUpload } from "#app/models/submission/uploads/batches.server.ts";
import { commitUpload, submitJsonRows } from "#app/models/submission/uploads/commit.server.ts";
import * as submitPage from "#app/routes/contribute/submit.tsx";
import { createTestDetermination, createTestLab, createTestUser } from "#tests/factories.ts";
import { args, personWithSession, post, run } from "#tests/support/auth.ts";
import { toCsvText, uploadRows, type Cells } from "#tests/support/upload-files.ts";

const db = () => getDb();
let n = 0;
const code = () => `ZWQ${++n}`;

function row(overrides: Cells): Cells {
  const [base] = uploadRows(1, { prefix: `ZWB${++n}` });
  return { ...base, site_name: `Hardening Cove ${n}`, ...overrides };
}

async function validate(rows: Cells[]) {
  const user = createTestUser(db());
  const file = Buffer.from(toCsvText(rows));
  return { user, ...(await createUpload(db(), { userId: user.id, fileName: "corpus.csv", file })) };
}

const at = (errors: { row: number; column: string; message: string }[], r: number, column: string) =>
  errors.find((e) => e.row === r && e.column === column)?.message ?? "";

describe("identifiers with characters nobody can see", () => {
  const cases: [column: string, value: string, expected: RegExp][] = [
    ["lab_code", "ZWQ\u200B-1", /lab code contains a zero-width space \(U\+200B\) at position 4/],
    ["lab_code", "ZWQ\u00AD-1", /soft hyphen \(U\+00AD\) at position 4/],
    ["sample_code", "S\uFEFF1", /sample code contains a byte-order mark .*U\+FEFF.* at position 2/],
    ["sample_code", "S\u200D1", /zero-width joiner \(U\+200D\) at position 2/],
    ["site_name", "Hardening\u202E Cove", /site name contains a bidirectional control \(U\+202E\) at position 10/],
    ["site_name", "Hardening\u2066Cove", /bidirectional isolate \(U\+2066\) at position 10/],
  ];
  it.each(cases)("refuses %s %j by name and position (upload)", async (column, value, expected) => {
    const { validation } = await validate([row({ [column]: value })]);
    expect(validation.validCount).toBe(0);
    expect(at(validation.errors, 2, column)).toMatch(expected);
  });

  it("refuses them in the API's JSON rows, at the item and column", () => {
    const user = createTestUser(db());
    // A NUL byte cannot reach the row checker in a CSV (the reader refuses the file as binary), but it can in JSON.
    const result = submitJsonRows(db(), [row({ lab_code: "ZWQ\u200B-7" }), row({ lab_code: "ZWQ-8\u0000" })], {
      userId: user.id,
    });
    expect(result.ok).toBe(false);
    if (result.ok) return;
    const at = (index: number) => result.errors.find((e) => e.index === index && e.column === "lab_code")?.message;
    expect(at(0)).toMatch(/zero-width space \(U\+200B\) at position 4/);
    expect(at(1)).toMatch(/NUL character \(U\+0000\) at position 6/);
  });

  it("refuses them on the form, at the field", async () => {
    const person = await personWithSession(["contributor"]);
    const lab = createTestLab(db());
    const [r] = uploadRows(1, { prefix: code() });
    const form: Record<string, string> = { site_choice: "new", age_normalised: "yes", greater_than: "no" };
    for (const [k, v] of Object.entries(r!)) if (v != null && k !== "doi") form[k] = String(v);
    form.lab_name = lab.name;
    form.site_name = "Hardening\u200DBluff";
    const out = await run(() => submitPage.action(args(post("/submit", form, { cookie: person.cookie }))));
    expect(out.status).toBe(400);
    const errors = (out.data as { result?: { error?: Record<string, string[]> } }).result?.error ?? {};
    expect(errors.site_name?.[0]).toMatch(/zero-width joiner \(U\+200D\) at position 10/);
  });
});

describe("look-alike lab codes are the same code", () => {
  it("finds the registry's ZWQ-10 under a non-breaking hyphen, full-width letters or another case", async () => {
    const c = code();
    const existing = createTestDetermination(db(), { labCode: `${c}-10` });
    const lookAlikes = [
      `${c}\u201110`,
      `${c}`.replace(/[A-Z0-9]/g, (ch) => String.fromCodePoint(ch.codePointAt(0)! + 0xfee0)) + "-10",
      `${c.toLowerCase()}-10`,
    ];
    const { validation } = await validate(lookAlikes.map((lab_code) => row({ lab_code })));
    for (const r of [2, 3, 4]) expect(at(validation.errors, r, "lab_code")).toContain(`/determinations/${existing.id}`);
  });

  it("finds two spellings of one code within a file, and stores the normalised code", async () => {
    const c = code();
    const { validation } = await validate([row({ lab_code: `${c}-11` }), row({ lab_code: `${c}\u201111` })]);
    expect(at(validation.errors, 3, "lab_code")).toMatch(/also appears in row 2/);

    const fullWidth = `${c}`.replace(/[A-Z0-9]/g, (ch) => String.fromCodePoint(ch.codePointAt(0)! + 0xfee0)) + "\u201112";
    const { batch, user } = await validate([row({ lab_code: fullWidth, lab_name: null })]);
    const { determinationIds } = commitUpload(db(), batch, "all", { userId: user.id });
    expect(db().$client.prepare("select lab_code from determinations where id = ?").pluck().get(determinationIds[0])).toBe(
      `${c}-12`,
    );
  });
});

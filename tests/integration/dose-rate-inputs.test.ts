import { describe, expect, it } from "vitest";
import { seedForFile } from "#tests/support/test-db.ts";
import { getDb } from "#app/db/client.server.ts";
import { createToken } from "#app/models/accounts/tokens.server.ts";
import { runChecksFor } from "#app/models/review/check-run.server.ts";
import { determinationDetail } from "#app/models/registry/determination-page.server.ts";
import * as submitPage from "#app/routes/contribute/submit.tsx";
import * as preview from "#app/routes/resources/determination-preview.ts";
import * as uploadsApi from "#app/routes/api/v1/uploads.ts";
import * as commitApi from "#app/routes/api/v1/uploads.commit.ts";
import * as determinationsApi from "#app/routes/api/v1/determinations.ts";
import { fullDoseRate } from "#app/science/dose-rate.ts";
import type { PreviewResult } from "#app/utils/submission-form.ts";
import { createTestLab, createTestUser } from "#tests/factories.ts";
import { args, ORIGIN, personWithSession, post, run } from "#tests/support/auth.ts";
import { directIntegration } from "#tests/support/curve-reference.ts";
import { toCsvText } from "#tests/support/upload-files.ts";

/*
 * The new dose-rate and radiocarbon input columns end to end: a form row, an upload row and an
 * API row store the dose rate and error the science gives for the same inputs written out by
 * hand (fullDoseRate, not the row mapping); warnings land at their field; a freshwater offset
 * moves the stored median as a direct integration over the published curve says; a slightly
 * negative F14C is stored as a limit.
 */

const db = () => getDb();
type Person = Awaited<ReturnType<typeof personWithSession>>;
let contributor: Person;
let token: string;
let labName: string;
let n = 0;
const code = (p: string) => `${p}-${process.pid % 1000}-${++n}`;
const SITE = { latitude: 57.9402, longitude: -66.1037, elevationM: 88 };

seedForFile(async () => {
  contributor = await personWithSession(["contributor"]);
  const apiUser = createTestUser(db(), ["contributor"]);
  token = createToken(db(), apiUser.id, "test", { actorId: apiUser.id }).token;
  labName = createTestLab(db(), { name: "Rimeford Dose Test Laboratory", codePrefix: "RDT" }).name;
});

const detRow = (id: number) =>
  db().$client.prepare("select * from determinations where id = ?").get(id) as Record<string, number | string | null>;
const detByCode = (labCode: string) =>
  db().$client.prepare("select * from determinations where lab_code = ?").get(labCode) as Record<string, number | string | null>;
const currentCal = (id: number) =>
  db().$client.prepare("select * from calibrations where determination_id = ? and is_current = 1").get(id) as {
    median_cal_bp: number | null;
    curve_label: string;
    error: string | null;
  };

function idFrom(location: string | null): number {
  const m = /^\/determinations\/(\d+)$/.exec(location ?? "");
  if (!m) throw new Error(`Not a determination page: ${location}`);
  return Number(m[1]);
}

/** A luminescence row in the template's column names (strings, as a form or a CSV sends them). */
function lumRow(overrides: Record<string, string>): Record<string, string> {
  return {
    site_name: `Rimeford Test Terrace ${++n}`,
    latitude: String(SITE.latitude),
    longitude: String(SITE.longitude),
    elevation_m: String(SITE.elevationM),
    sample_code: `RT-${n}`,
    material: "quartz",
    method: "luminescence",
    constraint_kind: "minimum",
    lab_name: labName,
    lab_code: code("RDT-L"),
    signal: "OSL",
    mineral: "quartz",
    de_gy: "24.5",
    de_error_gy: "1.1",
    measurement_year: "2024",
    ...overrides,
  };
}

function radiocarbonRow(overrides: Record<string, string>): Record<string, string> {
  return {
    site_name: `Rimeford Test Lake ${++n}`,
    latitude: "58.4321",
    longitude: "-63.9876",
    sample_code: `RL-${n}`,
    material: "freshwater shell",
    method: "radiocarbon",
    constraint_kind: "minimum",
    lab_name: labName,
    lab_code: code("RDT"),
    curve: "intcal20",
    ...overrides,
  };
}

const asForm = (row: Record<string, string>) => ({ site_choice: "new", age_normalised: "yes", ...row });

async function submitForm(row: Record<string, string>) {
  return run(() => submitPage.action(args(post("/submit", asForm(row), { cookie: contributor.cookie }))));
}

function jsonPost(path: string, body: unknown) {
  return new Request(`${ORIGIN}${path}`, {
    method: "POST",
    body: JSON.stringify(body),
    headers: { "Content-Type": "application/json", Authorization: `Bearer ${token}` },
  });
}

type ApiIssue = { index: number; row: number; column: string; message: string };

async function apiPost(rows: Record<string, string>[]) {
  const out = await run(() => determinationsApi.action(args(jsonPost("/api/v1/determinations", rows))));
  return out as { status: number; data: { determination_ids?: number[]; errors?: ApiIssue[]; warnings: ApiIssue[] } };
}

async function uploadAndCommit(rows: Record<string, string>[]) {
  const body = new FormData();
  body.append("file", new Blob([toCsvText(rows)]), "dates.csv");
  const req = new Request(`${ORIGIN}/api/v1/uploads`, { method: "POST", body, headers: { Authorization: `Bearer ${token}` } });
  const up = (await run(() => uploadsApi.action(args(req)))) as {
    status: number;
    data: { upload_id: string; valid: number; errors: unknown[]; warnings: { row: number; column: string; message: string }[] };
  };
  expect(up.status, JSON.stringify(up.data)).toBe(200);
  expect(up.data.errors).toEqual([]);
  const commit = await run(() =>
    commitApi.action(
      args(jsonPost(`/api/v1/uploads/${up.data.upload_id}/commit`, { mode: "all" }), { uploadId: up.data.upload_id }),
    ),
  );
  expect(commit.status).toBe(200);
  return up.data;
}

describe("the new dose-rate columns through form, upload and API", () => {
  it("a form row (K-feldspar pIRIR with the lab's errors, Rb, internal K and Rb, a lab cosmic dose rate)", async () => {
    const row = lumRow({
      material: "K-feldspar",
      mineral: "K-feldspar",
      signal: "pIRIR",
      k_percent: "1.6",
      k_error_percent: "0.06",
      u_ppm: "1.2",
      u_error_ppm: "0.1",
      th_ppm: "4.5",
      th_error_ppm: "0.3",
      rb_ppm: "60",
      rb_error_ppm: "6",
      water_content: "0.15",
      water_content_error: "0.04",
      grain_size_um: "200",
      grain_use: "coarse",
      internal_k_percent: "12",
      internal_k_error_percent: "0.4",
      internal_rb_ppm: "380",
      internal_rb_error_ppm: "60",
      burial_depth_m: "1.5",
      burial_depth_error_m: "0.1",
      density_g_cm3: "1.8",
      density_error_g_cm3: "0.1",
      lab_cosmic_gy_per_ka: "0.15",
      lab_cosmic_error_gy_per_ka: "0.015",
    });
    const out = await submitForm(row);
    expect(out.status, JSON.stringify(out.data)).toBe(302);
    const d = detRow(idFrom(out.location));
    const expected = fullDoseRate({
      k: { value: 1.6, error: 0.06 },
      u: { value: 1.2, error: 0.1 },
      th: { value: 4.5, error: 0.3 },
      rb: { value: 60, error: 6 },
      water: { value: 0.15, error: 0.04 },
      mineral: "k-feldspar",
      grain: { kind: "coarse", diameterUm: 200, etchUm: 0 },
      internalK: { value: 12, error: 0.4 },
      internalRb: { value: 380, error: 60 },
      depthM: { value: 1.5, error: 0.1 },
      density: { value: 1.8, error: 0.1 },
      site: SITE,
      labCosmic: { value: 0.15, error: 0.015 },
    });
    expect(d.dose_rate_gy_per_ka).toBeCloseTo(expected.total, 10);
    expect(d.dose_rate_error_gy_per_ka).toBeCloseTo(expected.totalError, 10);
    expect(d).toMatchObject({
      dose_rate_computed: 1,
      k_error_percent: 0.06,
      rb_ppm: 60,
      internal_k_percent: 12,
      internal_rb_error_ppm: 60,
      lab_cosmic_gy_per_ka: 0.15,
      grain_use: "coarse",
      water_content_error_fraction: 0.04,
      density_error_g_per_cm3: 0.1,
    });
    // Nothing the lab gave is marked assumed; the internal dose is there.
    expect(expected.sources.filter((s) => s.assumed && s.key !== "cosmicFormula")).toEqual([]);
    expect(expected.components.find((c) => c.key === "internal")!.value).toBeGreaterThan(0.1);
  });

  it("an upload row (fine-grain polymineral IRSL with its a-value and the lab's errors)", async () => {
    const row = lumRow({
      material: "polymineral",
      mineral: "polymineral",
      signal: "IRSL",
      k_percent: "2.1",
      k_error_percent: "0.08",
      u_ppm: "2.8",
      u_error_ppm: "0.2",
      th_ppm: "10.5",
      th_error_ppm: "0.6",
      water_content: "0.2",
      water_content_error: "0.05",
      grain_size_um: "8",
      grain_use: "fine",
      a_value: "0.08",
      a_value_error: "0.01",
      burial_depth_m: "2.2",
      burial_depth_error_m: "0.2",
      density_g_cm3: "1.9",
      density_error_g_cm3: "0.1",
    });
    const up = await uploadAndCommit([row]);
    expect(up.warnings.filter((w) => w.column === "a_value")).toEqual([]);
    const d = detByCode(row.lab_code!);
    const expected = fullDoseRate({
      k: { value: 2.1, error: 0.08 },
      u: { value: 2.8, error: 0.2 },
      th: { value: 10.5, error: 0.6 },
      water: { value: 0.2, error: 0.05 },
      mineral: "polymineral",
      grain: { kind: "fine", diameterUm: 8 },
      aValue: { value: 0.08, error: 0.01 },
      depthM: { value: 2.2, error: 0.2 },
      density: { value: 1.9, error: 0.1 },
      site: SITE,
    });
    expect(d.dose_rate_gy_per_ka).toBeCloseTo(expected.total, 10);
    expect(d.dose_rate_error_gy_per_ka).toBeCloseTo(expected.totalError, 10);
    expect(expected.components.find((c) => c.key === "alpha")!.value).toBeGreaterThan(0.3);
    expect(d).toMatchObject({ a_value: 0.08, a_value_error: 0.01, grain_use: "fine", dose_rate_computed: 1 });
  });

  it("an API row (coarse quartz, etched, Rb measured, every error given)", async () => {
    const row = lumRow({
      k_percent: "1.1",
      k_error_percent: "0.04",
      u_ppm: "0.9",
      u_error_ppm: "0.08",
      th_ppm: "3.2",
      th_error_ppm: "0.25",
      rb_ppm: "45",
      rb_error_ppm: "5",
      water_content: "0.08",
      water_content_error: "0.03",
      grain_size_um: "212",
      etch_depth_um: "15",
      burial_depth_m: "0.9",
      burial_depth_error_m: "0.05",
      density_g_cm3: "1.7",
      density_error_g_cm3: "0.08",
    });
    const out = await apiPost([row]);
    expect(out.status, JSON.stringify(out.data)).toBe(201);
    const d = detRow(out.data.determination_ids![0]!);
    const inputs = {
      k: { value: 1.1, error: 0.04 },
      u: { value: 0.9, error: 0.08 },
      th: { value: 3.2, error: 0.25 },
      rb: { value: 45, error: 5 },
      water: { value: 0.08, error: 0.03 },
      mineral: "quartz" as const,
      depthM: { value: 0.9, error: 0.05 },
      density: { value: 1.7, error: 0.08 },
      site: SITE,
    };
    const expected = fullDoseRate({ ...inputs, grain: { kind: "coarse", diameterUm: 212, etchUm: 15 } });
    expect(d.dose_rate_gy_per_ka).toBeCloseTo(expected.total, 10);
    expect(d.dose_rate_error_gy_per_ka).toBeCloseTo(expected.totalError, 10);
    expect(d).toMatchObject({ etch_depth_um: 15, rb_error_ppm: 5, burial_depth_error_m: 0.05, u_error_ppm: 0.08 });
    // The etch matters: without it (the assumed 10 µm) the dose rate differs.
    const assumedEtch = fullDoseRate({ ...inputs, grain: { kind: "coarse", diameterUm: 212, etchUm: 10 } });
    expect(Math.abs(assumedEtch.total - expected.total)).toBeGreaterThan(1e-4);
  });
});

describe("warnings at the field", () => {
  it("API: a pIRIR K-feldspar row without internal K is stored with a warning at internal_k_percent", async () => {
    const row = lumRow({
      material: "K-feldspar",
      mineral: "K-feldspar",
      signal: "pIRIR",
      k_percent: "1.6",
      u_ppm: "1.2",
      th_ppm: "4.5",
      water_content: "0.15",
      grain_size_um: "200",
      burial_depth_m: "1.5",
      density_g_cm3: "1.8",
    });
    const out = await apiPost([row]);
    expect(out.status).toBe(201);
    const warning = out.data.warnings.find((w) => w.column === "internal_k_percent");
    expect(warning).toMatchObject({ index: 0, row: 1, message: expect.stringMatching(/12\.5 ± 0\.5 %.*assumed/) });
    // The same caution is stored with the checks, so a reviewer sees it in the queue.
    const id = out.data.determination_ids![0]!;
    runChecksFor(db(), [id]);
    const valueRange = determinationDetail(db(), id)!.checks.find((c) => c.check === "value_range");
    expect(valueRange).toMatchObject({ severity: "note", message: expect.stringMatching(/Dose-rate inputs: .*12\.5 ± 0\.5 %/) });
  });

  it("API: a fine-grain row without an a-value is refused at a_value, nothing written", async () => {
    const row = lumRow({
      material: "polymineral",
      mineral: "polymineral",
      signal: "IRSL",
      k_percent: "2.1",
      u_ppm: "2.8",
      th_ppm: "10.5",
      water_content: "0.2",
      grain_size_um: "8",
      burial_depth_m: "2.2",
      density_g_cm3: "1.9",
    });
    const out = await apiPost([row]);
    expect(out.status).toBe(400);
    expect(out.data.errors).toEqual([
      expect.objectContaining({ index: 0, column: "a_value", message: expect.stringMatching(/a-value/) }),
    ]);
    expect(detByCode(row.lab_code!)).toBeUndefined();
  });

  it("form preview: cautions come back at their fields, in the form's words", async () => {
    const row = asForm(
      lumRow({
        material: "K-feldspar",
        mineral: "K-feldspar",
        signal: "IRSL",
        k_percent: "1.6",
        u_ppm: "1.2",
        th_ppm: "4.5",
        water_content: "0.15",
        burial_depth_m: "1.5",
      }),
    );
    const out = await run(() => preview.action(args(post("/api/determination-preview", row, { cookie: contributor.cookie }))));
    const state = out.data as PreviewResult;
    expect(state.state).toBe("ok");
    const columns = (state.warnings ?? []).map((w) => w.column).sort();
    expect(columns).toEqual(["density_g_cm3", "grain_size_um", "internal_k_percent"]);
  });

  it("a southern-hemisphere site on IntCal20: a warning on the upload row and on the determination page", async () => {
    const row = radiocarbonRow({
      material: "plant macrofossil",
      latitude: "-45.2",
      longitude: "169.3",
      c14_age: "9000",
      c14_error: "40",
    });
    const up = await uploadAndCommit([row]);
    expect(up.warnings).toContainEqual(
      expect.objectContaining({ row: 2, column: "curve", message: expect.stringMatching(/southern hemisphere.*IntCal20/) }),
    );
    const id = detByCode(row.lab_code!).id as number;
    expect(determinationDetail(db(), id)!.hemisphere).toMatch(/southern hemisphere.*northern-hemisphere curve/);
    runChecksFor(db(), [id]);
    const curveCheck = determinationDetail(db(), id)!.checks.find((c) => c.check === "marine");
    expect(curveCheck).toMatchObject({ severity: "warning", message: expect.stringMatching(/latitude 45\.20° S/) });
    const north = await apiPost([radiocarbonRow({ material: "plant macrofossil", c14_age: "9000", c14_error: "40" })]);
    expect(north.data.warnings.filter((w) => w.column === "curve")).toEqual([]);
    expect(determinationDetail(db(), north.data.determination_ids![0]!)!.hemisphere).toBeNull();
  });
});

describe("radiocarbon edges at input", () => {
  it("a freshwater offset is recorded and applied like ΔR: the median moves as a direct integration says", async () => {
    const withOffset = radiocarbonRow({
      c14_age: "9600",
      c14_error: "40",
      freshwater_offset: "350",
      freshwater_offset_error: "60",
    });
    const without = radiocarbonRow({ c14_age: "9600", c14_error: "40" });
    const out = await apiPost([withOffset, without]);
    expect(out.status, JSON.stringify(out.data)).toBe(201);
    const [a, b] = out.data.determination_ids!;
    expect(detRow(a!)).toMatchObject({ freshwater_offset_yr: 350, freshwater_offset_error_yr: 60 });
    // Reference: the age less the offset, the offset's error in quadrature, integrated directly over intcal20.csv.
    const ref = directIntegration("intcal20.csv", { age: 9250, error: Math.hypot(40, 60) });
    const plain = directIntegration("intcal20.csv", { age: 9600, error: 40 });
    const calA = currentCal(a!);
    const calB = currentCal(b!);
    expect(Math.abs(calA.median_cal_bp! - ref.median)).toBeLessThan(1);
    expect(Math.abs(calB.median_cal_bp! - plain.median)).toBeLessThan(1);
    expect(calB.median_cal_bp! - calA.median_cal_bp!).toBeGreaterThan(300);
    expect(calA.curve_label).toMatch(/freshwater offset 350 ± 60/);
  });

  it("a slightly negative blank-corrected F14C is accepted at input and stored as a limit; one far below zero is refused", async () => {
    const limit = await submitForm(
      radiocarbonRow({ material: "plant macrofossil", c14_input: "f14c", f14c: "-0.002", f14c_error: "0.003" }),
    );
    expect(limit.status, JSON.stringify(limit.data)).toBe(302);
    const id = idFrom(limit.location);
    expect(detRow(id)).toMatchObject({ f14c: -0.002, is_limit: 1 });
    expect(currentCal(id).error).toMatch(/greater than .* ¹⁴C yr BP \(from F¹⁴C \+ 2σ\)/);
    const refused = await submitForm(
      radiocarbonRow({ material: "plant macrofossil", c14_input: "f14c", f14c: "-0.01", f14c_error: "0.003" }),
    );
    expect(refused.status).toBe(400);
    const errors = ((refused.data as { result?: { error?: Record<string, string[]> } }).result?.error ?? {}) as Record<
      string,
      string[]
    >;
    expect(errors.f14c?.[0]).toMatch(/below zero by more than twice its error/);
    expect(errors.f14c?.[0]).not.toMatch(/f14c/);
  });
});

import { describe, expect, it } from "vitest";
import { seedForFile } from "#tests/support/test-db.ts";
import { getDb } from "#app/db/client.server.ts";
import { calibrateDeterminations } from "#app/models/calibration/calibrations.server.ts";
import { createToken } from "#app/models/accounts/tokens.server.ts";
import * as determinationsApi from "#app/routes/api/v1/determinations.ts";
import type { ApiPage } from "#app/models/registry/determinations-api.server.ts";
import { createTestDetermination, createTestLab, createTestSample, createTestSite, createTestUser } from "#tests/factories.ts";
import { args, ORIGIN, run } from "#tests/support/auth.ts";

const db = () => getDb();

function apiGet(query: string, token?: string) {
  return new Request(`${ORIGIN}/api/v1/determinations${query}`, {
    headers: token ? { Authorization: `Bearer ${token}` } : {},
  });
}

function tokenFor(roles: ("contributor" | "modeller" | "reviewer")[]) {
  const user = createTestUser(db(), roles);
  return createToken(db(), user.id, "test", { actorId: user.id }).token;
}

async function fetchPage(query: string, token: string) {
  const out = await run(() => determinationsApi.loader(args(apiGet(query, token))));
  return out;
}

let modellerToken: string;
const radiocarbonIds: number[] = [];
let luminescenceId: number;
let withdrawnId: number;
let siteId: number;

seedForFile(() => {
  modellerToken = tokenFor(["modeller"]);
  const lab = createTestLab(db(), { name: "Corniche Test Lab", codePrefix: "CTL" });
  const site = createTestSite(db(), { name: "Apiward Test Point", latitude: 58.25, longitude: -63.75 });
  siteId = site.id;
  const sample = createTestSample(db(), { siteId: site.id, fieldCode: "API-S1" });
  for (let i = 0; i < 7; i++) {
    radiocarbonIds.push(
      createTestDetermination(db(), { labId: lab.id, sampleId: sample.id, labCode: `APIQ-${i}`, c14AgeYr: 9000 + i * 100 }).id,
    );
  }
  const lumSample = createTestSample(db(), { siteId: site.id, fieldCode: "API-L1", material: "quartz" });
  luminescenceId = createTestDetermination(db(), {
    labId: lab.id,
    sampleId: lumSample.id,
    labCode: "APIQ-L1",
    method: "luminescence",
  }).id;
  withdrawnId = createTestDetermination(db(), { labId: lab.id, sampleId: sample.id, labCode: "APIQ-W1", status: "withdrawn" }).id;
  calibrateDeterminations(db(), [...radiocarbonIds, luminescenceId, withdrawnId]);
});

describe("GET /api/v1/determinations", () => {
  it("answers 401 without a token or with a bad one", async () => {
    const none = await run(() => determinationsApi.loader(args(apiGet(""))));
    expect(none.status).toBe(401);
    expect(none.headers.get("WWW-Authenticate")).toMatch(/Bearer/);
    const bad = await run(() => determinationsApi.loader(args(apiGet("", "not-a-token"))));
    expect(bad.status).toBe(401);
  });

  it("serves any role's token: the page, its size, the total and full records with the current calibration", async () => {
    for (const token of [modellerToken, tokenFor(["reviewer"]), tokenFor(["contributor"])]) {
      expect((await fetchPage("?q=APIQ-", token)).status).toBe(200);
    }
    const out = await fetchPage("?q=APIQ-&sort=labCode&dir=asc", modellerToken);
    expect(out.headers.get("Content-Type")).toMatch(/application\/json/);
    const body = out.data as ApiPage;
    expect(body).toMatchObject({ page: 1, per_page: 100, total: 8 });
    expect(body.determinations.map((d) => d.lab_code)).toEqual([
      "APIQ-0",
      "APIQ-1",
      "APIQ-2",
      "APIQ-3",
      "APIQ-4",
      "APIQ-5",
      "APIQ-6",
      "APIQ-L1",
    ]);
    const first = body.determinations[0]!;
    expect(first).toMatchObject({
      id: radiocarbonIds[0],
      lab_code: "APIQ-0",
      lab: { name: "Corniche Test Lab" },
      site: { id: siteId, name: "Apiward Test Point", latitude: 58.25, longitude: -63.75 },
      sample_code: "API-S1",
      material: "plant macrofossil",
      method: "radiocarbon",
      constraint_kind: "minimum",
      status: "submitted",
      grade: null,
      c14_age: 9000,
      c14_error: 40,
      greater_than: false,
      curve: "intcal20",
      de_gy: null,
    });
    expect(first.calibration!.curve).toMatch(/IntCal20/);
    expect(first.calibration!.median_cal_bp).toBeGreaterThan(9950);
    expect(first.calibration!.hpd95.length).toBeGreaterThan(0);
    expect(first.calibration!.hpd68[0]).toEqual({ from: expect.any(Number), to: expect.any(Number), p: expect.any(Number) });
    const lum = body.determinations.find((d) => d.id === luminescenceId)!;
    expect(lum).toMatchObject({
      method: "luminescence",
      de_gy: 22.5,
      dose_rate_gy_per_ka: 2.2,
      c14_age: null,
      greater_than: null,
    });
    expect(lum.calibration!.curve).toMatch(/luminescence/);
  });

  it("applies Explore's filters: method, status (withdrawn only on request), site", async () => {
    const lum = (await fetchPage("?q=APIQ-&method=luminescence", modellerToken)).data as ApiPage;
    expect(lum.determinations.map((d) => d.id)).toEqual([luminescenceId]);
    const withdrawn = (await fetchPage("?q=APIQ-&status=withdrawn", modellerToken)).data as ApiPage;
    expect(withdrawn.determinations.map((d) => d.id)).toEqual([withdrawnId]);
    const all = (await fetchPage("?q=APIQ-&status=all", modellerToken)).data as ApiPage;
    expect(all.total).toBe(9);
    const bySite = (await fetchPage("?site=Apiward&ageFrom=9150&ageTo=9450&method=radiocarbon", modellerToken)).data as ApiPage;
    expect(bySite.determinations.map((d) => d.lab_code).sort()).toEqual(["APIQ-2", "APIQ-3", "APIQ-4"]);
  });

  it("pages with page and per_page: disjoint pages in order, an empty page past the end", async () => {
    const seen: string[] = [];
    for (let page = 1; page <= 3; page++) {
      const body = (await fetchPage(`?q=APIQ-&sort=labCode&dir=asc&per_page=3&page=${page}`, modellerToken)).data as ApiPage;
      expect(body).toMatchObject({ page, per_page: 3, total: 8 });
      seen.push(...body.determinations.map((d) => d.lab_code));
    }
    expect(seen).toEqual(["APIQ-0", "APIQ-1", "APIQ-2", "APIQ-3", "APIQ-4", "APIQ-5", "APIQ-6", "APIQ-L1"]);
    const past = (await fetchPage("?q=APIQ-&per_page=3&page=4", modellerToken)).data as ApiPage;
    expect(past).toMatchObject({ page: 4, total: 8, determinations: [] });
  });

  it("spans Explore's fixed pages when per_page is larger than they are", async () => {
    // 60 more rows so a page of 55 starting at row 56 crosses Explore's 50-row pages.
    const lab = createTestLab(db());
    const sample = createTestSample(db());
    for (let i = 0; i < 60; i++)
      createTestDetermination(db(), { labId: lab.id, sampleId: sample.id, labCode: `SPANQ-${String(i).padStart(3, "0")}` });
    const one = (await fetchPage("?q=SPANQ-&sort=labCode&dir=asc&per_page=55", modellerToken)).data as ApiPage;
    const two = (await fetchPage("?q=SPANQ-&sort=labCode&dir=asc&per_page=55&page=2", modellerToken)).data as ApiPage;
    expect(one.total).toBe(60);
    expect(one.determinations).toHaveLength(55);
    expect(two.determinations).toHaveLength(5);
    const codes = [...one.determinations, ...two.determinations].map((d) => d.lab_code);
    expect(codes).toEqual(Array.from({ length: 60 }, (_, i) => `SPANQ-${String(i).padStart(3, "0")}`));
  });

  it("answers 400 naming a malformed parameter, and caps per_page at 500", async () => {
    const big = await fetchPage("?per_page=501", modellerToken);
    expect(big.status).toBe(400);
    expect((big.data as { errors: string[] }).errors[0]).toMatch(/per_page/);
    const bad = await fetchPage("?method=carbon&page=0", modellerToken);
    expect(bad.status).toBe(400);
    const errors = (bad.data as { errors: string[] }).errors.join(" ");
    expect(errors).toMatch(/method/);
    expect(errors).toMatch(/page/);
    // Each message names the parameter and what it takes, never the schema library's own words.
    const worded = await fetchPage("?ageFrom=abc&method=carbon&lumTo=-3&grade=9", modellerToken);
    expect(worded.status).toBe(400);
    const messages = (worded.data as { errors: string[] }).errors;
    expect(messages).toContain(
      'ageFrom: give a measured age in years (¹⁴C yr BP or luminescence years), from −100 to 10,000,000 (got "abc")',
    );
    expect(messages).toContain('method: give one of radiocarbon, luminescence, exposure (got "carbon")');
    expect(messages).toContain('lumTo: give a luminescence age in ka, from 0 to 10,000 (got "-3")');
    expect(messages.some((m) => m.startsWith("grade: give a minimum grade"))).toBe(true);
    expect(messages.join(" ")).not.toMatch(/Invalid|expected|received|NaN/);
    expect((await fetchPage("?per_page=500", modellerToken)).status).toBe(200);
  });
});

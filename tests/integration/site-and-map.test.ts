import { describe, expect, it } from "vitest";
import { seedForFile } from "#tests/support/test-db.ts";
import { getDb } from "#app/db/client.server.ts";
import { loader as siteLoader } from "#app/routes/explore/site.tsx";
import { loader as mapLoader } from "#app/routes/explore/map.tsx";
import { loader as mapSitesLoader } from "#app/routes/resources/map-sites.ts";
import type { SiteDetail } from "#app/models/registry/site-page.server.ts";
import type { Isochrones, MapSite } from "#app/models/registry/map.server.ts";
import { createTestDetermination, createTestLab, createTestSample, createTestSite } from "#tests/factories.ts";
import { args, get, personWithSession, run } from "#tests/support/auth.ts";
import { insertCalibration, insertReconstruction } from "#tests/support/pages-fixtures.ts";

let cookie: string;
let siteId: number;
let emptySiteId: number;

seedForFile(async () => {
  const db = getDb();
  cookie = (await personWithSession(["contributor"])).cookie;
  const lab = createTestLab(db);
  const site = createTestSite(db, { name: "Tarnwick Lake Basin", latitude: 58.25, longitude: -66.5 });
  siteId = site.id;
  emptySiteId = createTestSite(db, { name: "Undated Knoll" }).id;
  // Inserted out of order on purpose: the page orders by order in the column, then depth.
  const deep = createTestSample(db, { siteId, fieldCode: "TL-deep", stratOrder: 3, depthCm: 300, stratUnit: "till" });
  const top = createTestSample(db, { siteId, fieldCode: "TL-top", stratOrder: 1, depthCm: 20, stratUnit: "peat" });
  const middleB = createTestSample(db, { siteId, fieldCode: "TL-mid-b", stratOrder: 2, depthCm: 150, stratUnit: "gyttja" });
  const middleA = createTestSample(db, { siteId, fieldCode: "TL-mid-a", stratOrder: 2, depthCm: 110, stratUnit: "gyttja" });
  createTestSample(db, { siteId, fieldCode: "TL-unplaced", stratOrder: null, depthCm: null });

  const add = (
    labCode: string,
    sampleId: number,
    median: number | null,
    extra: Parameters<typeof createTestDetermination>[1] = {},
  ) => {
    const d = createTestDetermination(db, { labCode, labId: lab.id, sampleId, ...extra });
    if (median != null) insertCalibration(db, d.id, { medianCalBp: median });
    return d;
  };
  add("TLX-deep", deep.id, 11800, { grade: 1, status: "graded" });
  add("TLX-top", top.id, 7600, { grade: 3, status: "graded" });
  add("TLX-mid-b", middleB.id, 9900);
  add("TLX-mid-a", middleA.id, 9100, { grade: 2, status: "graded" });
  add("TLX-mid-a2", middleA.id, null);
  add("TLX-gone", top.id, 1000, { status: "withdrawn", grade: 3 });
  add("TLX-rejected", top.id, 20000, { grade: 0, status: "graded" });
  add("TLX-advance", deep.id, 30000, { constraintKind: "maximum", grade: 3, status: "graded" });
  insertReconstruction(db, [8000, 9000, 10000]);
});

describe("site page loader", () => {
  it("sends signed-out visitors to sign in and answers 404 for a missing site", async () => {
    const out = await run(() => siteLoader(args(get(`/sites/${siteId}`), { id: String(siteId) })));
    expect(out.status).toBe(302);
    expect(out.location).toMatch(/^\/sign-in\?redirectTo=/);
    const missing = await run(() => siteLoader(args(get("/sites/424242", { cookie }), { id: "424242" })));
    expect(missing.status).toBe(404);
    const junk = await run(() => siteLoader(args(get("/sites/x", { cookie }), { id: "x" })));
    expect(junk.status).toBe(404);
  });

  it("lists samples and determinations in stratigraphic order, then depth, with calibrated medians", async () => {
    const out = await run(() => siteLoader(args(get(`/sites/${siteId}`, { cookie }), { id: String(siteId) })));
    expect(out.status).toBe(200);
    const { detail } = out.data as { detail: SiteDetail };
    expect(detail.site.name).toBe("Tarnwick Lake Basin");
    const order = detail.rows.map((r) => `${r.fieldCode}:${r.labCode ?? "-"}`);
    expect(order).toEqual([
      "TL-top:TLX-gone",
      "TL-top:TLX-rejected",
      "TL-top:TLX-top",
      "TL-mid-a:TLX-mid-a",
      "TL-mid-a:TLX-mid-a2",
      "TL-mid-b:TLX-mid-b",
      "TL-deep:TLX-advance",
      "TL-deep:TLX-deep",
      "TL-unplaced:-",
    ]);
    expect(detail.rows.find((r) => r.labCode === "TLX-mid-a")?.medianCalBp).toBe(9100);
    expect(detail.rows.find((r) => r.labCode === "TLX-mid-a2")?.medianCalBp).toBeNull();
    expect(detail.sampleCount).toBe(5);
    expect(detail.determinationCount).toBe(8);
  });

  it("shows a site with no samples", async () => {
    const out = await run(() => siteLoader(args(get(`/sites/${emptySiteId}`, { cookie }), { id: String(emptySiteId) })));
    expect(out.status).toBe(200);
    expect((out.data as { detail: SiteDetail }).detail.rows).toEqual([]);
  });
});

describe("map data", () => {
  it("refuses signed-out callers with 401 JSON", async () => {
    const out = await run(() => mapSitesLoader(args(get("/api/map-sites"))));
    expect(out.status).toBe(401);
    expect(out.headers.get("Content-Type")).toContain("application/json");
  });

  it("gives one compact row per dated site with count, ages and best grade", async () => {
    const out = await run(() => mapSitesLoader(args(get("/api/map-sites", { cookie }))));
    expect(out.status).toBe(200);
    const { sites } = out.data as { sites: MapSite[] };
    const tarnwick = sites.find((s) => s.id === siteId)!;
    // Withdrawn left out (7 of 8). The rejected 20,000 and the maximum-limiting 30,000 count as
    // determinations but not towards the deglaciation age; the uncalibrated ¹⁴C age (9,000 ¹⁴C BP,
    // the factory default) does.
    expect(tarnwick).toMatchObject({ name: "Tarnwick Lake Basin", lat: 58.25, lon: -66.5, n: 7, grade: 3 });
    // Ages: 7,600, 9,000 (measured), 9,100, 9,900, 11,800 → youngest 7,600, median 9,100.
    expect(tarnwick.min).toBe(7600);
    expect(tarnwick.med).toBe(9100);
    expect(sites.some((s) => s.id === emptySiteId)).toBe(false);
    expect(Object.keys(tarnwick).sort()).toEqual(["grade", "id", "lat", "lon", "med", "min", "n", "name"]);
  });

  it("hands the page the demo isochrones with their ages", async () => {
    const out = await run(() => mapLoader(args(get("/map", { cookie }))));
    expect(out.status).toBe(200);
    const { reconstruction } = out.data as { reconstruction: Isochrones };
    expect(reconstruction.ages).toEqual([8000, 9000, 10000]);
    expect(reconstruction.features).toHaveLength(3);
    const signedOut = await run(() => mapLoader(args(get("/map"))));
    expect(signedOut.status).toBe(302);
  });
});

import { describe, expect, it } from "vitest";
import { seedForFile } from "#tests/support/test-db.ts";
import { getDb } from "#app/db/client.server.ts";
import { publications } from "#app/db/schema.ts";
import { loader } from "#app/routes/explore/determination.tsx";
import { diffRecords, type DeterminationDetail } from "#app/models/registry/determination-page.server.ts";
import { createTestDetermination, createTestLab, createTestSample, createTestSite } from "#tests/factories.ts";
import { args, get, personWithSession, run } from "#tests/support/auth.ts";
import { insertAudit, insertCalibration, insertCheck, insertReview } from "#tests/support/pages-fixtures.ts";

let cookie: string;
let reviewerId: number;
let mainId: number;
let replicateId: number;
let neighbourId: number;

async function detail(id: number | string): Promise<DeterminationDetail> {
  const outcome = await run(() => loader(args(get(`/determinations/${id}`, { cookie }), { id: String(id) })));
  expect(outcome.status).toBe(200);
  return (outcome.data as { detail: DeterminationDetail }).detail;
}

seedForFile(async () => {
  const db = getDb();
  cookie = (await personWithSession(["modeller"])).cookie;
  const reviewer = await personWithSession(["reviewer"], { name: "Ottilie Reviewer-Test" });
  reviewerId = reviewer.id;
  const contributor = await personWithSession(["contributor"], { name: "Casimir Contributor-Test" });

  const lab = createTestLab(db, { name: "Harrowdeep Test Lab", codePrefix: "HDX" });
  const site = createTestSite(db, { name: "Skerrow Bay Terrace" });
  const sample = createTestSample(db, { siteId: site.id, fieldCode: "SB-1", material: "marine shell" });
  const other = createTestSample(db, { siteId: site.id, fieldCode: "SB-2", stratOrder: 3 });
  const publication = db
    .insert(publications)
    .values({ citation: "Tester, A. (2031) An invented paper about shells.", doi: "10.99999/thawline.test.1", year: 2031 })
    .returning()
    .get();

  const main = createTestDetermination(db, {
    labCode: "HDX-1",
    labId: lab.id,
    sampleId: sample.id,
    publicationId: publication.id,
    c14AgeYr: 9850,
    c14ErrorYr: 50,
    curveName: "marine20",
    deltaRYr: -45,
    deltaRErrorYr: 55,
    actorId: contributor.id,
  });
  mainId = main.id;
  insertCalibration(db, mainId, { medianCalBp: 10700, curveLabel: "Marine20 (2020), ΔR -45 ± 55" });
  insertCalibration(db, mainId, { medianCalBp: 10650, curveLabel: "Marine13 (2013)", isCurrent: false });
  replicateId = createTestDetermination(db, { labCode: "HDX-2", labId: lab.id, sampleId: sample.id }).id;
  neighbourId = createTestDetermination(db, { labCode: "HDX-3", labId: lab.id, sampleId: other.id }).id;
  createTestDetermination(db, { labCode: "HDX-ELSEWHERE", labId: lab.id });

  insertReview(db, mainId, reviewerId, { grade: 3, flags: [], comment: "First look.", createdAt: new Date(Date.now() - 60_000) });
  insertReview(db, mainId, reviewerId, { grade: 2, flags: ["reservoir_uncertain"], comment: "Local ΔR poorly known." });
  insertCheck(db, mainId, {
    check: "marine",
    severity: "warning",
    message: "Marine shell poleward of 40°.",
    suggestedFlag: "reservoir_uncertain",
  });
  insertAudit(db, {
    actorId: reviewerId,
    action: "determination.update",
    entity: "determination",
    entityId: String(mainId),
    before: { c14ErrorYr: 60, notes: null, version: 1, labCode: "HDX-1" },
    after: { c14ErrorYr: 50, notes: "Error corrected", version: 2, labCode: "HDX-1" },
    at: new Date(Date.now() + 1000),
  });
});

describe("determination page loader", () => {
  it("answers 404 for a missing or malformed id", async () => {
    for (const id of ["999999", "abc", "0", "-4", "1.5"]) {
      const outcome = await run(() => loader(args(get(`/determinations/${id}`, { cookie }), { id })));
      expect(outcome.status, id).toBe(404);
    }
  });

  it("shows the measurement, sample, site, lab and publication", async () => {
    const d = await detail(mainId);
    expect(d.determination).toMatchObject({ labCode: "HDX-1", c14AgeYr: 9850, deltaRYr: -45, curveName: "marine20" });
    expect(d.sample.fieldCode).toBe("SB-1");
    expect(d.site.name).toBe("Skerrow Bay Terrace");
    expect(d.lab.codePrefix).toBe("HDX");
    expect(d.publication?.doi).toBe("10.99999/thawline.test.1");
    expect(d.contributor?.name).toBe("Casimir Contributor-Test");
  });

  it("summarises the current calibration and lists earlier ones", async () => {
    const d = await detail(mainId);
    expect(d.calibration).toMatchObject({ medianCalBp: 10700, curveLabel: "Marine20 (2020), ΔR -45 ± 55" });
    expect(d.calibration?.hpd95).toHaveLength(2);
    expect(d.calibration?.hpd68?.[0]?.p).toBeCloseTo(0.683);
    expect(d.earlierCalibrations.map((c) => c.curveLabel)).toEqual(["Marine13 (2013)"]);
    const uncalibrated = await detail(replicateId);
    expect(uncalibrated.calibration).toBeNull();
  });

  it("links siblings on the same sample and at the same site, and nothing from elsewhere", async () => {
    const d = await detail(mainId);
    expect(d.sameSample.map((s) => s.id)).toEqual([replicateId]);
    expect(d.sameSite.map((s) => s.id)).toEqual([neighbourId]);
  });

  it("shows the latest review, the checks and the history with a field diff", async () => {
    const d = await detail(mainId);
    expect(d.review).toMatchObject({ grade: 2, flags: ["reservoir_uncertain"], reviewerName: "Ottilie Reviewer-Test" });
    expect(d.reviewCount).toBe(2);
    expect(d.checks).toEqual([expect.objectContaining({ check: "marine", severity: "warning" })]);
    expect(d.history.map((h) => h.action)).toEqual(["determination.update", "determination.create"]);
    const update = d.history[0]!;
    expect(update.actorName).toBe("Ottilie Reviewer-Test");
    expect(update.changes).toEqual([
      { field: "c14ErrorYr", before: 60, after: 50 },
      { field: "notes", before: null, after: "Error corrected" },
    ]);
    expect(d.history[1]!.whole).toBe("created");
  });
});

describe("diffRecords", () => {
  it("lists changed fields only, leaving out bookkeeping", () => {
    expect(diffRecords({ a: 1, b: [1, 2], version: 1 }, { a: 1, b: [1, 3], version: 2, c: "new" })).toEqual([
      { field: "b", before: [1, 2], after: [1, 3] },
      { field: "c", before: null, after: "new" },
    ]);
  });
});

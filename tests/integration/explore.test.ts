import { describe, expect, it } from "vitest";
import { seedForFile } from "#tests/support/test-db.ts";
import { getDb } from "#app/db/client.server.ts";
import { loader } from "#app/routes/explore/explore.tsx";
import {
  exploreDeterminations,
  parseExploreFilters,
  safeParseExploreFilters,
  type ExploreRow,
} from "#app/models/registry/query.server.ts";
import { createTestDetermination, createTestLab, createTestSample, createTestSite } from "#tests/factories.ts";
import { args, get, personWithSession, run } from "#tests/support/auth.ts";
import { insertCalibration } from "#tests/support/pages-fixtures.ts";

/*
 * The Explore page's loader and query against a database of their own: a small, deliberately
 * varied set of determinations (methods, labs, grades, ages, calibrations, one withdrawn) plus
 * a batch of 120 at one site for paging.
 */

let cookie: string;
const codes: Record<string, number> = {};

type Outcome = { filters: unknown; result: { rows: ExploreRow[]; total: number; page: number; pageCount: number } };

async function explore(query: string): Promise<Outcome["result"]> {
  const outcome = await run(() => loader(args(get(`/explore${query}`, { cookie }))));
  expect(outcome.status).toBe(200);
  return (outcome.data as Outcome).result;
}

const labCodes = (rows: ExploreRow[]) => rows.map((r) => r.labCode);

seedForFile(async () => {
  const db = getDb();
  cookie = (await personWithSession(["modeller"])).cookie;

  const north = createTestLab(db, { name: "Northgate Isotope Test Lab", codePrefix: "NGX" });
  const south = createTestLab(db, { name: "Southmere Luminescence Test Lab", codePrefix: "SMX" });
  const fjord = createTestSite(db, { name: "Quillet Fjord Head" });
  const moraine = createTestSite(db, { name: "Brannock Moraine" });
  const shell = createTestSample(db, { siteId: fjord.id, material: "marine shell", fieldCode: "QF-1" });
  const plant = createTestSample(db, { siteId: fjord.id, material: "plant macrofossil", fieldCode: "QF-2" });
  const sand = createTestSample(db, { siteId: moraine.id, material: "quartz", fieldCode: "BM-1" });

  const add = (labCode: string, values: Parameters<typeof createTestDetermination>[1], median?: number) => {
    const d = createTestDetermination(db, { labCode, ...values });
    if (median !== undefined) insertCalibration(db, d.id, { medianCalBp: median });
    codes[labCode] = d.id;
    return d;
  };
  add("NGX-101", { labId: north.id, sampleId: shell.id, c14AgeYr: 10250, c14ErrorYr: 45, grade: 3, status: "graded" }, 11200);
  add(
    "NGX-102",
    {
      labId: north.id,
      sampleId: plant.id,
      c14AgeYr: 9100,
      c14ErrorYr: 40,
      grade: 1,
      status: "graded",
      constraintKind: "maximum",
    },
    10250,
  );
  add("NGX-103", { labId: north.id, sampleId: plant.id, c14AgeYr: 45000, c14ErrorYr: null, isLimit: true, status: "submitted" });
  add("NGX-104", { labId: north.id, sampleId: shell.id, c14AgeYr: 8000, c14ErrorYr: 35, status: "withdrawn" }, 8600);
  add("NGX-105", { labId: north.id, sampleId: plant.id, c14AgeYr: 8500, c14ErrorYr: 30, status: "in_review" });
  // 24.6 Gy / 2.0 Gy/ka = 12.3 ka
  add(
    "SMX-201",
    {
      labId: south.id,
      sampleId: sand.id,
      method: "luminescence",
      deGy: 24.6,
      deErrorGy: 1.2,
      doseRateGyPerKa: 2.0,
      doseRateErrorGyPerKa: 0.1,
      grade: 2,
      status: "graded",
    },
    12230,
  );
  // 18 Gy / 2.0 Gy/ka = 9 ka
  add(
    "SMX-202",
    {
      labId: south.id,
      sampleId: sand.id,
      method: "luminescence",
      deGy: 18,
      deErrorGy: 1,
      doseRateGyPerKa: 2.0,
      doseRateErrorGyPerKa: 0.1,
      grade: 0,
      status: "graded",
    },
    8930,
  );

  // 120 determinations at one site of their own, for paging.
  const pageLab = createTestLab(db, { name: "Paging Test Lab", codePrefix: "PGX" });
  const pageSite = createTestSite(db, { name: "Paging Flats" });
  const pageSample = createTestSample(db, { siteId: pageSite.id });
  db.$client.transaction(() => {
    for (let i = 0; i < 120; i++) {
      createTestDetermination(db, {
        labCode: `PGX-${String(i).padStart(3, "0")}`,
        labId: pageLab.id,
        sampleId: pageSample.id,
        c14AgeYr: 7000 + i,
      });
    }
  })();
});

describe("Explore loader", () => {
  it("sends signed-out visitors to sign in, keeping the filters for afterwards", async () => {
    const outcome = await run(() => loader(args(get("/explore?method=radiocarbon&q=NGX"))));
    expect(outcome.status).toBe(302);
    expect(outcome.location).toBe(`/sign-in?redirectTo=${encodeURIComponent("/explore?method=radiocarbon&q=NGX")}`);
  });

  it("leaves withdrawn determinations out unless asked for", async () => {
    expect(labCodes((await explore("?q=NGX-")).rows).sort()).toEqual(["NGX-101", "NGX-102", "NGX-103", "NGX-105"]);
    expect(labCodes((await explore("?q=NGX-&status=withdrawn")).rows)).toEqual(["NGX-104"]);
    expect((await explore("?q=NGX-&status=all")).total).toBe(5);
  });

  it("filters by method, material, lab, site, constraint kind and status", async () => {
    expect(labCodes((await explore("?method=luminescence")).rows).sort()).toEqual(["SMX-201", "SMX-202"]);
    expect(labCodes((await explore("?material=marine%20shell")).rows)).toEqual(["NGX-101"]);
    const southLab = (await explore("?q=SMX-201")).rows[0]!;
    expect(southLab.labName).toBe("Southmere Luminescence Test Lab");
    const labId = getDb().$client.prepare("select id from labs where code_prefix = 'SMX'").get() as { id: number };
    expect((await explore(`?lab=${labId.id}`)).total).toBe(2);
    expect(labCodes((await explore("?site=brannock")).rows).sort()).toEqual(["SMX-201", "SMX-202"]);
    expect(labCodes((await explore("?kind=maximum")).rows)).toEqual(["NGX-102"]);
    expect(labCodes((await explore("?status=in_review")).rows)).toEqual(["NGX-105"]);
  });

  it("filters by minimum grade and by ungraded", async () => {
    expect(labCodes((await explore("?grade=2&sort=labCode")).rows)).toEqual(["NGX-101", "SMX-201"]);
    expect(labCodes((await explore("?grade=0&sort=labCode")).rows)).toEqual(["NGX-101", "NGX-102", "SMX-201", "SMX-202"]);
    const ungraded = await explore("?grade=ungraded&q=NGX");
    expect(labCodes(ungraded.rows).sort()).toEqual(["NGX-103", "NGX-105"]);
  });

  it("windows the measured age in years for both methods, in either order", async () => {
    // radiocarbon 10,250 and luminescence 12,300 (De / dose rate) fall in 10,000–12,500; 9,000 and 9,100 do not.
    const rows = (await explore("?ageFrom=10000&ageTo=12500&sort=labCode")).rows;
    expect(labCodes(rows)).toEqual(["NGX-101", "SMX-201"]);
    expect(labCodes((await explore("?ageFrom=12500&ageTo=10000&sort=labCode")).rows)).toEqual(["NGX-101", "SMX-201"]);
    expect(labCodes((await explore("?ageFrom=8990&ageTo=9010")).rows)).toEqual(["SMX-202"]);
  });

  it("windows radiocarbon ages in ¹⁴C yr BP and luminescence ages in ka, each only its own method", async () => {
    // 10,250 ¹⁴C yr BP is in 10,000–12,500; luminescence 12.3 ka is not a radiocarbon age.
    expect(labCodes((await explore("?c14From=10000&c14To=12500&sort=labCode")).rows)).toEqual(["NGX-101"]);
    // 12.3 ka and 9.0 ka: only luminescence rows, in ka, either order.
    expect(labCodes((await explore("?lumFrom=12.5&lumTo=10&sort=labCode")).rows)).toEqual(["SMX-201"]);
    expect(labCodes((await explore("?lumFrom=8.99&lumTo=9.01")).rows)).toEqual(["SMX-202"]);
    // Both windows: a date in either is kept.
    expect(labCodes((await explore("?c14From=10000&c14To=12500&lumFrom=8.99&lumTo=9.01&sort=labCode")).rows)).toEqual([
      "NGX-101",
      "SMX-202",
    ]);
  });

  it("windows the calibrated median and leaves uncalibrated rows out of it", async () => {
    expect(labCodes((await explore("?calFrom=10000&calTo=12000&sort=cal&dir=asc")).rows)).toEqual(["NGX-102", "NGX-101"]);
    expect((await explore("?calFrom=0&q=NGX")).total).toBe(2);
  });

  it("searches lab codes and site names", async () => {
    expect(labCodes((await explore("?q=ngx-10")).rows).length).toBe(4);
    expect(labCodes((await explore("?q=Quillet")).rows).sort()).toEqual(["NGX-101", "NGX-102", "NGX-103", "NGX-105"]);
    // LIKE wildcards are taken literally.
    expect((await explore("?q=%25")).total).toBe(0);
    expect((await explore("?q=NGX_10")).total).toBe(0);
  });

  it("sorts by calibrated median with the uncalibrated last in both directions", async () => {
    const desc = labCodes((await explore("?q=NGX&sort=cal")).rows);
    expect(desc).toEqual(["NGX-101", "NGX-102", ...desc.slice(2)]);
    expect(desc.slice(2).sort()).toEqual(["NGX-103", "NGX-105"]);
    const asc = labCodes((await explore("?q=NGX&sort=cal&dir=asc")).rows);
    expect(asc.slice(0, 2)).toEqual(["NGX-102", "NGX-101"]);
  });

  it("sorts by measured age, lab code, site and grade", async () => {
    expect(labCodes((await explore("?method=luminescence&sort=age")).rows)).toEqual(["SMX-201", "SMX-202"]);
    expect(labCodes((await explore("?method=luminescence&sort=age&dir=asc")).rows)).toEqual(["SMX-202", "SMX-201"]);
    expect(labCodes((await explore("?q=NGX&sort=age")).rows)).toEqual(["NGX-103", "NGX-101", "NGX-102", "NGX-105"]);
    expect(labCodes((await explore("?grade=0&sort=grade")).rows)).toEqual(["NGX-101", "SMX-201", "NGX-102", "SMX-202"]);
    const bySite = (await explore("?grade=0&sort=site")).rows.map((r) => r.siteName);
    expect(bySite).toEqual([...bySite].sort());
    expect(bySite[0]).toBe("Brannock Moraine");
  });

  it("pages 50 at a time with the total count", async () => {
    const first = await explore("?lab=" + pageLabId() + "&sort=labCode");
    expect(first.total).toBe(120);
    expect(first.pageCount).toBe(3);
    expect(first.rows).toHaveLength(50);
    expect(first.rows[0]!.labCode).toBe("PGX-000");
    const third = await explore("?lab=" + pageLabId() + "&sort=labCode&page=3");
    expect(third.page).toBe(3);
    expect(labCodes(third.rows)).toEqual(Array.from({ length: 20 }, (_, i) => `PGX-${100 + i}`));
    // A page past the end shows the last page rather than an empty one.
    expect((await explore("?lab=" + pageLabId() + "&page=99")).page).toBe(3);
  });

  it("answers an empty result with a zero total", async () => {
    const none = await explore("?q=no-such-code-anywhere");
    expect(none.total).toBe(0);
    expect(none.rows).toEqual([]);
  });

  it("returns what the table shows: site, material, measured fields and the calibrated range", async () => {
    const row = (await explore("?q=NGX-101")).rows[0]!;
    expect(row).toMatchObject({
      id: codes["NGX-101"],
      siteName: "Quillet Fjord Head",
      material: "marine shell",
      method: "radiocarbon",
      c14AgeYr: 10250,
      c14ErrorYr: 45,
      measuredAgeYr: 10250,
      medianCalBp: 11200,
      hpd95FromBp: 11350,
      hpd95ToBp: 11060,
      grade: 3,
      status: "graded",
      constraintKind: "minimum",
    });
    const limit = (await explore("?q=NGX-103")).rows[0]!;
    expect(limit.isLimit).toBe(true);
  });
});

function pageLabId(): number {
  return (getDb().$client.prepare("select id from labs where code_prefix = 'PGX'").get() as { id: number }).id;
}

describe("Explore filters", () => {
  it("drops malformed values on the page but keeps the rest of a shared view", () => {
    const filters = parseExploreFilters(new URLSearchParams("method=carbon14&grade=2&page=-3&sort=nonsense&ageFrom=abc&q=fjord"));
    expect(filters).toMatchObject({ grade: "2", q: "fjord", page: 1, sort: "created" });
    expect(filters.method).toBeUndefined();
    expect(filters.ageFrom).toBeUndefined();
  });

  it("reports malformed values to callers that want strictness (the API)", () => {
    const parsed = safeParseExploreFilters(new URLSearchParams("method=carbon14&grade=9"));
    expect(parsed.success).toBe(false);
    if (!parsed.success) expect(parsed.error.issues.map((i) => i.path[0]).sort()).toEqual(["grade", "method"]);
  });

  it("treats empty form fields as absent", () => {
    const filters = parseExploreFilters(new URLSearchParams("q=&method=&grade=&ageFrom=&lab="));
    expect(filters).toEqual({ sort: "created", page: 1 });
    expect(exploreDeterminations(getDb(), filters).total).toBeGreaterThan(120);
  });
});

describe("split 95.4 % ranges", () => {
  it("says how many parts a split range has, from the stored calibration", async () => {
    const db = getDb();
    const { calibrateDeterminations } = await import("#app/models/calibration/calibrations.server.ts");
    // 10250 ± 45 on IntCal20 falls on wiggles: its 95.4 % HPD is several disjoint ranges.
    const split = createTestDetermination(db, { labCode: "SPLIT-10250", c14AgeYr: 10250, c14ErrorYr: 45, curveName: "intcal20" });
    calibrateDeterminations(db, [split.id]);
    const stored = db.$client
      .prepare("select hpd95 from calibrations where determination_id = ? and is_current = 1")
      .get(split.id) as { hpd95: string };
    const parts = (JSON.parse(stored.hpd95) as unknown[]).length;
    expect(parts).toBeGreaterThan(1);
    const rows = await explore("?q=SPLIT-10250");
    expect(rows.rows).toHaveLength(1);
    expect(rows.rows[0]!.hpd95Parts).toBe(parts);
  });
});

import { beforeEach, describe, expect, it } from "vitest";
import { seedForFile } from "#tests/support/test-db.ts";
import { getDb } from "#app/db/client.server.ts";
import { calibrateDeterminations } from "#app/models/calibration/calibrations.server.ts";
import { loadConstraints } from "#app/models/model-runs/constraints.server.ts";
import { releaseChecksum } from "#app/models/releases/canonical.server.ts";
import { releaseResponse } from "#app/models/releases/release-download.server.ts";
import { releaseDiff } from "#app/models/releases/release-diff.server.ts";
import { publishRelease, PublishRefused, releaseById, type ReleaseRow } from "#app/models/releases/releases.server.ts";
import { parseConstraintFilter, type ConstraintFilter } from "#app/utils/constraint-filter.ts";
import { createTestUser } from "#tests/factories.ts";
import { seedDemo } from "#seed/seed.server.ts";

/* Publishing, immutability, the checksum from the download, and the diff between releases. */

const sqlite = () => getDb().$client;
const BASE_URL = "http://localhost/releases/";
let editorId: number;
let release: ReleaseRow;
let downloads: Record<string, string>;
/** What independent SQL counted when the release was published (later tests change the registry). */
let expectedCount: number;

function filter(q: string): ConstraintFilter {
  const r = parseConstraintFilter(new URLSearchParams(q));
  if (!r.ok) throw new Error(r.errors.join("; "));
  return r.filter;
}

async function allDownloads(r: ReleaseRow): Promise<Record<string, string>> {
  const out: Record<string, string> = {};
  for (const format of ["json", "csv", "geojson", "metadata"] as const) {
    out[format] = await releaseResponse(getDb(), r, format, `${BASE_URL}${r.slug}`).text();
  }
  out.densities = await releaseResponse(getDb(), r, "json", `${BASE_URL}${r.slug}`, true).text();
  return out;
}

seedForFile(async () => {
  await seedDemo(getDb(), { size: "small" });
  editorId = createTestUser(getDb(), ["editor"]).id;
  expectedCount = (
    sqlite()
      .prepare(
        `select count(*) n from determinations d join calibrations c on c.determination_id = d.id and c.is_current = 1
         where d.status != 'withdrawn' and d.grade >= 1 and c.median_cal_bp is not null`,
      )
      .get() as { n: number }
  ).n;
  const published = publishRelease(getDb(), {
    name: "Test release",
    version: "1",
    description: "Radiocarbon and luminescence, grade 1 or better",
    filter: filter("min_grade=1"),
    userId: editorId,
    baseUrl: BASE_URL,
  });
  release = releaseById(getDb(), published.id)!;
  downloads = await allDownloads(release);
});

describe("publishing a release", () => {
  it("freezes exactly the selection, with a checksum, a citation and the curves", () => {
    expect(release.itemCount).toBe(expectedCount);
    expect(release.checksum).toMatch(/^[0-9a-f]{64}$/);
    expect(release.citation).toContain("Test release, version 1");
    expect(release.citation).toContain(release.checksum);
    expect(release.curves.some((c) => c.curve === "IntCal20")).toBe(true);
    expect(release.slug).toBe("test-release-v1");
  });

  it("the checksum is reproducible from the JSON download by the documented rule", () => {
    const json = JSON.parse(downloads.json!);
    expect(json.checksum).toBe(release.checksum);
    expect(json.count).toBe(json.constraints.length);
    expect(releaseChecksum(json.constraints)).toBe(release.checksum);
    // With densities too: the density payload is left out of the rule, each item's density_ref names it.
    const dense = JSON.parse(downloads.densities!);
    expect(dense.constraints[0].density.p.length).toBe(dense.constraints[0].density_ref.length);
    expect(releaseChecksum(dense.constraints)).toBe(release.checksum);
  });

  it("refuses the same name and version twice, and an empty selection", () => {
    expect(() =>
      publishRelease(getDb(), { name: "Test release", version: "1", filter: filter(""), userId: editorId, baseUrl: BASE_URL }),
    ).toThrow(PublishRefused);
    expect(() =>
      publishRelease(getDb(), {
        name: "Empty",
        version: "1",
        filter: filter("from_cal_bp=90000&to_cal_bp=95000"),
        userId: editorId,
        baseUrl: BASE_URL,
      }),
    ).toThrow(/no determinations/);
  });
});

describe("a release never changes", () => {
  let edited: number;
  let regraded: number;
  let withdrawn: number;

  beforeEach(() => {
    const released = JSON.parse(downloads.json!).constraints as { id: number; method: string; grade: number }[];
    const c14 = released.filter((i) => i.method === "radiocarbon");
    [edited, regraded, withdrawn] = [c14[0]!.id, c14[1]!.id, c14[2]!.id];
    const reviewer = createTestUser(getDb(), ["reviewer"]).id;
    const db = sqlite();
    db.transaction(() => {
      // An edit that changes the measurement and so replaces the calibration on the same curve.
      db.prepare("update determinations set c14_age_yr = c14_age_yr + 400, version = version + 1 where id = ?").run(edited);
      calibrateDeterminations(getDb(), [edited]);
      // A regrade with a flag.
      db.prepare("insert into reviews (determination_id, reviewer_id, grade, flags) values (?, ?, 0, '[\"reworked\"]')").run(
        regraded,
        reviewer,
      );
      db.prepare("update determinations set grade = 0 where id = ?").run(regraded);
      // A withdrawal.
      db.prepare("update determinations set status = 'withdrawn' where id = ?").run(withdrawn);
    })();
  });

  it("after edits, regrades and withdrawals every download is the same, byte for byte", async () => {
    const again = await allDownloads(releaseById(getDb(), release.id)!);
    for (const format of Object.keys(downloads)) expect(again[format], format).toBe(downloads[format]);
  });

  it("the registry did change", () => {
    const row = sqlite().prepare("select grade from determinations where id = ?").get(regraded) as { grade: number };
    expect(row.grade).toBe(0);
  });

  it("the recalibration kept the released calibration (not current) beside the new current one", () => {
    const released = sqlite()
      .prepare("select calibration_id as id from release_items where release_id = ? and determination_id = ?")
      .get(release.id, edited) as { id: number };
    const rows = sqlite()
      .prepare("select id, is_current as current, density_sha256 as sha from calibrations where determination_id = ? order by id")
      .all(edited) as { id: number; current: number; sha: string }[];
    expect(rows.find((r) => r.id === released.id)).toMatchObject({ current: 0 });
    expect(rows.filter((r) => r.current === 1)).toHaveLength(1);
    const frozen = JSON.parse(downloads.json!).constraints.find((i: { id: number }) => i.id === edited);
    expect(frozen.density_ref).toMatchObject({
      calibration_id: released.id,
      sha256: rows.find((r) => r.id === released.id)!.sha,
    });
  });

  it("model-run scoring of the release reads the released density, not the recalibrated one", () => {
    const set = loadConstraints(getDb(), { releaseSlug: release.slug });
    const scored = set.constraints.find((c) => c.determinationId === edited)!;
    const dense = JSON.parse(downloads.densities!).constraints.find((i: { id: number }) => i.id === edited);
    expect(scored.density.startCalBp).toBe(dense.density.start_cal_bp);
    expect(scored.density.values.length).toBe(dense.density.p.length);
    const current = sqlite()
      .prepare("select density_start_cal_bp as start from calibrations where determination_id = ? and is_current = 1")
      .get(edited) as { start: number };
    expect(current.start).not.toBe(dense.density.start_cal_bp); // the registry moved (+400 ¹⁴C years)
  });

  it("the next release differs by what changed: removed, regraded, recalibrated, added", () => {
    // A new determination copied from a released one, so the next release has something added.
    const db = sqlite();
    const source = db.prepare("select * from determinations where id = ?").get(edited) as Record<string, unknown>;
    const { id: _id, ...rest } = source;
    rest.lab_code = `${String(rest.lab_code)}-NEW`;
    const cols = Object.keys(rest);
    const added = Number(
      db
        .prepare(`insert into determinations (${cols.join(",")}) values (${cols.map(() => "?").join(",")})`)
        .run(...Object.values(rest)).lastInsertRowid,
    );
    calibrateDeterminations(getDb(), [added]);
    const next = publishRelease(getDb(), {
      name: "Test release",
      version: "2",
      filter: filter("min_grade=1"),
      userId: editorId,
      baseUrl: BASE_URL,
    });
    const nextRow = releaseById(getDb(), next.id)!;
    expect(nextRow.previousReleaseId).toBe(release.id);
    expect(next.checksum).not.toBe(release.checksum);
    const diff = releaseDiff(getDb(), release.id, next.id);
    expect(diff.added.map((e) => e.id)).toEqual([added]);
    // The regraded one fell below grade 1 and the withdrawn one left: both are removed.
    expect(diff.removed.map((e) => e.id).sort()).toEqual([regraded, withdrawn].sort());
    expect(diff.recalibrated.map((e) => e.id)).toEqual([edited]);
    expect(diff.recalibrated[0]!.to_median).toBeGreaterThan(diff.recalibrated[0]!.from_median);
    expect(diff.unchanged).toBe(release.itemCount - 3);
    // Regraded but still selected: a second release with every grade shows it as regraded.
    const all = publishRelease(getDb(), {
      name: "Test release",
      version: "3",
      filter: filter(""),
      userId: editorId,
      baseUrl: BASE_URL,
    });
    const before = (JSON.parse(downloads.json!).constraints as { id: number; grade: number }[]).find((i) => i.id === regraded)!;
    const d3 = releaseDiff(getDb(), release.id, all.id);
    expect(d3.regraded.find((e) => e.id === regraded)).toEqual(expect.objectContaining({ from: before.grade, to: 0 }));
    expect(d3.removed.map((e) => e.id)).toEqual([withdrawn]);
  });
});

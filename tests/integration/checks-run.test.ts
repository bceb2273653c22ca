import { describe, expect, it } from "vitest";
import { getDb } from "#app/db/client.server.ts";
import { calibrateDeterminations } from "#app/models/calibration/calibrations.server.ts";
import { runChecksFor } from "#app/models/review/check-run.server.ts";
import { startCheckRun } from "#app/models/review/check-job.server.ts";
import { getJob, jobFinished } from "#app/models/jobs.server.ts";
import { exploreDeterminations, parseExploreFilters } from "#app/models/registry/query.server.ts";
import { createTestDetermination, createTestLab, createTestSample, createTestSite } from "#tests/factories.ts";

function replicatePair() {
  const db = getDb();
  const lab = createTestLab(db);
  const sample = createTestSample(db, { siteId: createTestSite(db, { latitude: 57.2, longitude: -64.1 }).id });
  // 9000 ± 30 and 9300 ± 30 on one sample: T = 50 ≫ 10.83 (Ward & Wilson; χ² table at 0.001)
  const a = createTestDetermination(db, { labId: lab.id, sampleId: sample.id, c14AgeYr: 9000, c14ErrorYr: 30 });
  const b = createTestDetermination(db, { labId: lab.id, sampleId: sample.id, c14AgeYr: 9300, c14ErrorYr: 30 });
  calibrateDeterminations(db, [a.id, b.id]);
  return { a, b };
}

const stored = (id: number) =>
  getDb()
    .$client.prepare('select "check", severity, message from check_results where determination_id = ? order by id')
    .all(id) as {
    check: string;
    severity: string;
    message: string;
  }[];

describe("running the checks", () => {
  it("stores all seven results for a determination and its replicate", () => {
    const { a, b } = replicatePair();
    runChecksFor(getDb(), [a.id]);
    expect(stored(a.id).map((r) => r.check)).toEqual([
      "value_range",
      "marine",
      "replicates",
      "stratigraphy",
      "neighbours",
      "reconstruction",
      "duplicates",
    ]);
    // The replicate is rechecked as well: its result depends on the new one.
    expect(stored(b.id).find((r) => r.check === "replicates")?.severity).toBe("conflict");
  });

  it("replaces earlier results instead of adding to them", () => {
    const { a } = replicatePair();
    runChecksFor(getDb(), [a.id]);
    runChecksFor(getDb(), [a.id]);
    expect(stored(a.id)).toHaveLength(7);
  });

  it("Explore filters on the worst check and shows it", () => {
    const { a } = replicatePair();
    runChecksFor(getDb(), [a.id]);
    const result = exploreDeterminations(getDb(), parseExploreFilters(new URLSearchParams("worst_check=conflict&sort=labCode")));
    const row = result.rows.find((r) => r.id === a.id);
    expect(row?.worstCheck).toBe("conflict");
    expect(result.rows.every((r) => r.worstCheck === "conflict")).toBe(true);
    const passing = exploreDeterminations(getDb(), parseExploreFilters(new URLSearchParams("worst_check=pass")));
    expect(passing.rows.some((r) => r.id === a.id)).toBe(false);
  });

  it("the whole-registry job reports progress and finishes with a summary", async () => {
    const { a } = replicatePair();
    const { jobId } = startCheckRun(getDb(), { actorId: null, reason: "test" });
    await jobFinished(jobId);
    const job = getJob(getDb(), jobId)!;
    expect(job.status).toBe("done");
    expect(job.progress).toBe(job.total);
    expect(job.message).toMatch(/determinations checked/);
    expect(stored(a.id)).toHaveLength(7);
  });
});

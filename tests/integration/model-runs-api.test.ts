import { existsSync, mkdtempSync, readdirSync, rmSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { afterAll, describe, expect, it } from "vitest";
import { seedForFile } from "#tests/support/test-db.ts";
import { getDb } from "#app/db/client.server.ts";
import { calibrations, determinations, labs, modelRuns, samples, sites } from "#app/db/schema.ts";
import { createToken } from "#app/models/accounts/tokens.server.ts";
import { runFilesDir } from "#app/models/model-runs/runs.server.ts";
import { jobFinished } from "#app/models/jobs.server.ts";
import { action as postRun } from "#app/routes/api/v1/model-runs.ts";
import { loader as getRun } from "#app/routes/api/v1/model-run.ts";
import { loader as getEnsemble } from "#app/routes/api/v1/ensemble.ts";
import { args, ORIGIN, personWithSession, run } from "#tests/support/auth.ts";
import { densityBlob, runFile as runFileIn } from "#tests/support/model-runs.ts";

const dir = mkdtempSync(join(tmpdir(), "thawline-api-runs-"));
afterAll(() => rmSync(dir, { recursive: true, force: true }));
let token: string;
let detIds: number[] = [];

const runFile = (name: string, degl: number, units?: string) => runFileIn(dir, name, degl, units);

function upload(form: Record<string, string | File>, auth = token) {
  const body = new FormData();
  for (const [k, v] of Object.entries(form)) body.append(k, v);
  return new Request(`${ORIGIN}/api/v1/model-runs`, { method: "POST", body, headers: { Authorization: `Bearer ${auth}` } });
}

const apiGet = (path: string) => new Request(`${ORIGIN}${path}`, { headers: { Authorization: `Bearer ${token}` } });

seedForFile(async () => {
  const db = getDb();
  const modeller = await personWithSession(["modeller"]);
  token = createToken(db, modeller.id, "runs", { actorId: modeller.id }).token;
  const contributor = await personWithSession(["contributor"]);
  const lab = db.insert(labs).values({ name: "Runs Test Laboratory", codePrefix: "ZZR", city: "Nowhere" }).returning().get();
  const site = db.insert(sites).values({ name: "Runs Test Site", latitude: 57, longitude: -66 }).returning().get();
  const sample = db.insert(samples).values({ siteId: site.id, fieldCode: "ZZR-F1", material: "marine shell" }).returning().get();
  // three minimum-limiting dates at 10,000 cal BP (σ 100): graded 3, 2 and rejected (0)
  detIds = [3, 2, 0].map((grade, i) => {
    const d = db
      .insert(determinations)
      .values({
        sampleId: sample.id,
        labId: lab.id,
        contributorId: contributor.id,
        labCode: `ZZR-000${i}`,
        method: "luminescence",
        constraintKind: "minimum",
        status: "graded",
        grade,
      })
      .returning()
      .get();
    const { start, blob } = densityBlob(10000, 100);
    db.insert(calibrations)
      .values({
        determinationId: d.id,
        curveLabel: "luminescence",
        isCurrent: true,
        densityStartCalBp: start,
        density: blob,
        medianCalBp: 10000,
      })
      .run();
    return d.id;
  });
});

/** Waits for every scoring job this file started (the runs record their job). */
async function scoringIdle() {
  const ids = new Set(
    getDb()
      .select({ jobId: modelRuns.jobId })
      .from(modelRuns)
      .all()
      .map((r) => r.jobId),
  );
  for (const id of ids) if (id) await jobFinished(id);
}

describe("POST /api/v1/model-runs → background scoring → GET", () => {
  it("answers 202 queued, scores in the background, and reports raw scores", async () => {
    const res = await run(async () =>
      postRun(
        args(
          upload({
            file: await runFile("early.nc", 10500),
            name: "early run",
            ensemble: "api-test",
            parameters: '{"sliding": 1.2}',
          }),
        ),
      ),
    );
    expect(res.status).toBe(202);
    const { id, status } = res.data as { id: number; status: string };
    expect(status).toBe("queued");
    await scoringIdle();
    const got = await run(() => getRun(args(apiGet(`/api/v1/model-runs/${id}`), { id: String(id) })));
    expect(got.status).toBe(200);
    const body = got.data as Record<string, unknown> & {
      scores: { determination_id: number; score: number; implausibility: number; model_deglaciation_cal_bp: number }[];
    };
    expect(Object.keys(body)).toEqual(
      expect.arrayContaining([
        "id",
        "name",
        "status",
        "error",
        "log_likelihood",
        "n_constraints",
        "max_implausibility",
        "scores",
      ]),
    );
    expect(body.status).toBe("scored");
    // the rejected date is not scored against; the two others are
    expect(body.n_constraints).toBe(2);
    expect(body.scores.map((s) => s.determination_id).sort()).toEqual(detIds.slice(0, 2).sort());
    // hand: F ramps from 0 at 11,000 to 1 at 10,000; under N(10000, 100)
    // E[min(1, (11000 − t)/1000)] = 1 − E[(t − 10000)+]/1000 = 1 − 100·φ(0)/1000 = 0.96011
    for (const s of body.scores) {
      expect(s.score).toBeCloseTo(0.96011, 3);
      expect(s.implausibility).toBe(0);
      expect(s.model_deglaciation_cal_bp).toBeCloseTo(10500, 6);
    }
    expect(body.log_likelihood as number).toBeCloseTo((1 + 0.75) * Math.log(0.05 + 0.95 * body.scores[0].score), 3);
  });

  it("ranks an ensemble by log L", async () => {
    // Posted late first, so the ranking cannot be the upload order.
    const late = await run(async () =>
      postRun(args(upload({ file: await runFile("late.nc", 9000), name: "late run", ensemble: "api-rank" }))),
    );
    expect(late.status).toBe(202);
    const early = await run(async () =>
      postRun(
        args(
          upload({
            file: await runFile("early2.nc", 10500),
            name: "early run",
            ensemble: "api-rank",
            parameters: '{"sliding": 1.2}',
          }),
        ),
      ),
    );
    expect(early.status).toBe(202);
    await scoringIdle();
    const e = await run(() => getEnsemble(args(apiGet("/api/v1/ensembles/api-rank"), { name: "api-rank" })));
    expect(e.status).toBe(200);
    const runs = (
      e.data as { runs: { name: string; rank: number; log_likelihood: number; parameters: Record<string, number> }[] }
    ).runs;
    expect(runs.map((r) => r.name)).toEqual(["early run", "late run"]);
    expect(runs[0].parameters).toEqual({ sliding: 1.2 });
    expect(runs[0].log_likelihood).toBeGreaterThan(runs[1].log_likelihood);
  });

  it("needs a time offset when the units do not say, and keeps nothing for a bad file", async () => {
    const before = getDb().select().from(modelRuns).all().length;
    const filesBefore = existsSync(runFilesDir()) ? readdirSync(runFilesDir()).length : 0;
    const bad = await run(async () =>
      postRun(args(upload({ file: await runFile("model-time.nc", 10500, "years"), name: "needs offset" }))),
    );
    expect(bad.status).toBe(400);
    expect((bad.data as { error: string }).error).toMatch(/time offset/);
    const text = await run(() => postRun(args(upload({ file: new File(["not a model"], "x.nc"), name: "text" }))));
    expect(text.status).toBe(400);
    expect(getDb().select().from(modelRuns).all().length).toBe(before);
    expect(existsSync(runFilesDir()) ? readdirSync(runFilesDir()).length : 0).toBe(filesBefore);
    const ok = await run(async () =>
      postRun(args(upload({ file: await runFile("model-time.nc", 10500, "years"), name: "with offset", time_offset: "12000" }))),
    );
    expect(ok.status).toBe(202);
    await scoringIdle();
  });
});

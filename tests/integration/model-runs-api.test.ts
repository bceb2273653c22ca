import { describe, expect, it } from "vitest";
import { action as postRun } from "#app/routes/api/v1/model-runs.ts";
import { loader as getRun } from "#app/routes/api/v1/model-run.ts";
import { loader as getEnsemble } from "#app/routes/api/v1/ensemble.ts";
import { args, ORIGIN, run } from "#tests/support/auth.ts";
import { apiUpload, runFile as runFileIn, runsKept, scoringIdle, seedRunFixture } from "#tests/support/model-runs.ts";

// Three minimum-limiting dates at 10,000 cal BP (σ 100): graded 3, 2 and rejected (0).
const fx = seedRunFixture("ZZR", [3, 2, 0]);

const runFile = (name: string, degl: number, units?: string) => runFileIn(fx.dir, name, degl, units);
const upload = (form: Record<string, string | File>) => apiUpload(fx.token, form);
const apiGet = (path: string) => new Request(`${ORIGIN}${path}`, { headers: { Authorization: `Bearer ${fx.token}` } });

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
    expect(body.scores.map((s) => s.determination_id).sort()).toEqual(fx.detIds.slice(0, 2).sort());
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
    const before = runsKept();
    const bad = await run(async () =>
      postRun(args(upload({ file: await runFile("model-time.nc", 10500, "years"), name: "needs offset" }))),
    );
    expect(bad.status).toBe(400);
    expect((bad.data as { error: string }).error).toMatch(/time offset/);
    const text = await run(() => postRun(args(upload({ file: new File(["not a model"], "x.nc"), name: "text" }))));
    expect(text.status).toBe(400);
    expect(runsKept()).toEqual(before);
    const ok = await run(async () =>
      postRun(args(upload({ file: await runFile("model-time.nc", 10500, "years"), name: "with offset", time_offset: "12000" }))),
    );
    expect(ok.status).toBe(202);
    await scoringIdle();
  });
});

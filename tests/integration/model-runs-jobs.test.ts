// Scoring as a background job: the time-mapping step on the run page, resuming runs a restart
// left queued, release scoring on the densities frozen at publication, and the margin outlines.
import { eq } from "drizzle-orm";
import { describe, expect, it } from "vitest";
import { getDb } from "#app/db/client.server.ts";
import { calibrations, jobs, modelRunMargins, modelRuns } from "#app/db/schema.ts";
import { getJob, jobFinished } from "#app/models/jobs.server.ts";
import { createRun, resumeScoring } from "#app/models/model-runs/runs.server.ts";
import { getRun, runScores } from "#app/models/model-runs/views.server.ts";
import { action as runsAction } from "#app/routes/runs/runs.tsx";
import { action as runAction, loader as runLoader } from "#app/routes/runs/run.tsx";
import { loader as marginsLoader } from "#app/routes/resources/model-run-margins.ts";
import { args, get, ORIGIN, personWithSession, run } from "#tests/support/auth.ts";
import { densityBlob, pageUpload as pageUploadAs, runFile, seedRunFixture, writeRunFile } from "#tests/support/model-runs.ts";

// One minimum-limiting date, graded 3; its live density sits at 10,000 cal BP (σ 100).
const fx = seedRunFixture("ZZJ", [3]);
const dir = fx.dir;

const pageUpload = (files: File[], extra: Record<string, string> = {}) => pageUploadAs(fx.modeller.cookie, files, extra);

async function waitForRun(id: number) {
  const jobId = getRun(getDb(), id)!.jobId;
  expect(jobId).not.toBeNull();
  await jobFinished(jobId!);
  return getRun(getDb(), id)!;
}

describe("time-mapping step", () => {
  it("keeps a file whose units need an offset, scores it once the offset is stated on the run page", async () => {
    const db = getDb();
    const files = [await runFile(dir, "tm-a.nc", 9500, "years"), await runFile(dir, "tm-b.nc", 10500, "years")];
    const res = await run(() => runsAction(args(pageUpload(files, { ensemble: "tm-ensemble" }))));
    expect(res.status).toBe(302);
    const runs = db.select().from(modelRuns).where(eq(modelRuns.ensemble, "tm-ensemble")).orderBy(modelRuns.id).all();
    expect(runs.map((r) => r.status)).toEqual(["queued", "queued"]);
    expect(runs[0].timeMapping).toMatchObject({ units: "years", first: 0, last: 4000, n: 5 });
    expect(runs[0].jobId).toBeNull(); // nothing scores before the offset is stated

    const page = await run(() =>
      runLoader(args(get(`/runs/${runs[0].id}`, { cookie: fx.modeller.cookie }), { id: String(runs[0].id) })),
    );
    expect((page.data as { waitingOthers: number }).waitingOthers).toBe(1);

    // A bad offset is answered at its field, and nothing changes.
    const bad = await run(() =>
      runAction(
        args(
          new Request(`${ORIGIN}/runs/${runs[0].id}`, {
            method: "POST",
            body: new URLSearchParams({ intent: "time-offset", time_offset: "soon" }),
            headers: { Cookie: fx.modeller.cookie },
          }),
          { id: String(runs[0].id) },
        ),
      ),
    );
    expect(bad.status).toBe(400);
    expect(JSON.stringify(bad.data)).toMatch(/time_offset/);
    expect(getRun(db, runs[0].id)!.timeMapping).not.toBeNull();

    // Someone else cannot state it.
    const other = await personWithSession(["modeller"]);
    const forbidden = await run(() =>
      runAction(
        args(
          new Request(`${ORIGIN}/runs/${runs[0].id}`, {
            method: "POST",
            body: new URLSearchParams({ intent: "time-offset", time_offset: "12000" }),
            headers: { Cookie: other.cookie },
          }),
          { id: String(runs[0].id) },
        ),
      ),
    );
    expect(forbidden.status).toBe(403);

    const ok = await run(() =>
      runAction(
        args(
          new Request(`${ORIGIN}/runs/${runs[0].id}`, {
            method: "POST",
            body: new URLSearchParams({ intent: "time-offset", time_offset: "12000", whole_ensemble: "on" }),
            headers: { Cookie: fx.modeller.cookie },
          }),
          { id: String(runs[0].id) },
        ),
      ),
    );
    expect(ok.status).toBe(302);
    const a = await waitForRun(runs[0].id);
    const b = await waitForRun(runs[1].id);
    expect([a.status, b.status]).toEqual(["scored", "scored"]);
    expect(a.timeMapping).toBeNull();
    expect(a.timeOffsetCalBp).toBe(12000);
    // Ice leaves at 9,500 (after the date at 10,000: the site was under ice then) and at 10,500 (free by then).
    expect(runScores(db, a.id)[0].score).toBeLessThan(0.05);
    expect(runScores(db, b.id)[0].score).toBeGreaterThan(0.95);
    // One job scored both, counting time slices.
    expect(a.jobId).toBe(b.jobId);
    const job = getJob(db, a.jobId!)!;
    expect(job.kind).toBe("score-model-runs");
    expect([job.status, job.progress, job.total]).toEqual(["done", 10, 10]);
  });
});

describe("restart", () => {
  it("scores runs a restart left queued or cut off, and leaves waiting ones alone", async () => {
    const db = getDb();
    const base = { userId: fx.modeller.id, ensemble: "restart", maxBytes: Infinity };
    const queued = await createRun(db, {
      ...base,
      name: "left queued",
      filePath: await writeRunFile(dir, "r1.nc", 10500),
      fileName: "r1.nc",
    });
    const cut = await createRun(db, {
      ...base,
      name: "cut off",
      filePath: await writeRunFile(dir, "r2.nc", 9500),
      fileName: "r2.nc",
    });
    db.update(modelRuns).set({ status: "running" }).where(eq(modelRuns.id, cut.id)).run();
    const waiting = await createRun(
      db,
      { ...base, name: "waiting", filePath: await writeRunFile(dir, "r3.nc", 9500, "years"), fileName: "r3.nc" },
      true,
    );
    expect(waiting.timeMapping).not.toBeNull();

    const jobId = resumeScoring(db);
    expect(jobId).not.toBeNull();
    await jobFinished(jobId!);
    expect(getRun(db, queued.id)!.status).toBe("scored");
    expect(getRun(db, cut.id)!.status).toBe("scored");
    expect(getRun(db, waiting.id)!.status).toBe("queued");
    expect(getRun(db, waiting.id)!.jobId).toBeNull();
    expect(db.select().from(jobs).where(eq(jobs.id, jobId!)).get()!.status).toBe("done");
    // Margins were outlined while scoring and are served to the map, oldest first.
    const margins = db.select().from(modelRunMargins).where(eq(modelRunMargins.runId, queued.id)).all();
    expect(margins).toHaveLength(5);
    const served = await run(() =>
      marginsLoader(args(get(`/runs/${queued.id}/margins.json`, { cookie: fx.modeller.cookie }), { id: String(queued.id) })),
    );
    const slices = (served.data as { slices: { calBp: number; coordinates: number[][][][] }[] }).slices;
    expect(slices.map((s) => s.calBp)).toEqual([12000, 11000, 10000, 9000, 8000]);
    // Under ice (all nine cells) before 10,500 cal BP, none after.
    expect(slices[0].coordinates.length).toBe(1);
    expect(slices[4].coordinates.length).toBe(0);
  });
});

describe("release scoring", () => {
  it("uses the density frozen in the release, not the registry's current one", async () => {
    const db = getDb();
    // The release froze the date at 10,000 cal BP; the registry has since moved it to 8,500.
    const frozen = densityBlob(10000, 100);
    const live = densityBlob(8500, 100);
    const releaseId = Number(
      db.$client
        .prepare(
          `insert into releases (slug, name, version, filter, curve_versions, item_count, checksum, created_by, published_at)
           values ('frozen-test-1', 'Frozen test', '1', '{}', '[]', 1, 'x', ?, ?)`,
        )
        .run(fx.modeller.id, Date.now()).lastInsertRowid,
    );
    db.$client
      .prepare(
        "insert into release_items (release_id, determination_id, frozen, density_start_cal_bp, density) values (?, ?, ?, ?, ?)",
      )
      .run(
        releaseId,
        fx.detIds[0],
        JSON.stringify({ id: fx.detIds[0], latitude: 57, longitude: -66, constraint_kind: "minimum", grade: 3 }),
        frozen.start,
        frozen.blob,
      );
    db.update(calibrations)
      .set({ densityStartCalBp: live.start, density: live.blob })
      .where(eq(calibrations.determinationId, fx.detIds[0]))
      .run();
    // Ice leaves at 9,500: free at 8,500 (live: agrees) but not at 10,000 (frozen: disagrees).
    const withRelease = await createRun(db, {
      userId: fx.modeller.id,
      name: "release run",
      filePath: await writeRunFile(dir, "rel.nc", 9500),
      fileName: "rel.nc",
      choice: { releaseSlug: "frozen-test-1" },
    });
    const live2 = await createRun(db, {
      userId: fx.modeller.id,
      name: "live run",
      filePath: await writeRunFile(dir, "live.nc", 9500),
      fileName: "live.nc",
      choice: { grades: [3] },
    });
    const jobId = resumeScoring(db);
    await jobFinished(jobId!);
    // Put the registry back for the other tests.
    const back = densityBlob(10000, 100);
    db.update(calibrations)
      .set({ densityStartCalBp: back.start, density: back.blob })
      .where(eq(calibrations.determinationId, fx.detIds[0]))
      .run();
    const rel = runScores(db, withRelease.id).find((s) => s.determinationId === fx.detIds[0])!;
    const cur = runScores(db, live2.id).find((s) => s.determinationId === fx.detIds[0])!;
    expect(getRun(db, withRelease.id)!.releaseId).toBe(releaseId);
    expect(rel.score).toBeLessThan(0.05);
    expect(cur.score).toBeGreaterThan(0.95);
  });
});

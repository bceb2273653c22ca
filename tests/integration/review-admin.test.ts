import { afterEach, describe, expect, it } from "vitest";
import { getDb } from "#app/db/client.server.ts";
import { bodyLimitFor } from "#app/http/body-limit.js";
import { jobFinished, startJob } from "#app/models/jobs.server.ts";
import * as checksPage from "#app/routes/admin/checks.tsx";
import * as jobsRoute from "#app/routes/resources/jobs.ts";
import { runChecksFor } from "#app/models/review/check-run.server.ts";
import { calibrateDeterminations } from "#app/models/calibration/calibrations.server.ts";
import { createTestDetermination, createTestSample, createTestSite } from "#tests/factories.ts";
import { args, get, ORIGIN, personWithSession, run } from "#tests/support/auth.ts";

const db = () => getDb();
const count = (sql: string, ...p: unknown[]) =>
  db()
    .$client.prepare(sql)
    .pluck()
    .get(...p) as number;

/** A square of ice around (lon, lat) at each age, older squares larger: a margin retreating towards the centre. */
function isochrones(ages: number[], props: Record<string, unknown> = {}) {
  return {
    type: "FeatureCollection",
    features: ages.map((age, i) => {
      const h = 2 - i * 0.5;
      const ring = [
        [-64 - h, 58 - h],
        [-64 + h, 58 - h],
        [-64 + h, 58 + h],
        [-64 - h, 58 + h],
        [-64 - h, 58 - h],
      ];
      return { type: "Feature", properties: { age_cal_bp: age, ...props }, geometry: { type: "Polygon", coordinates: [ring] } };
    }),
  };
}

async function send(
  cookie: string,
  fields: Record<string, string>,
  file?: { text: string | Uint8Array<ArrayBuffer>; name: string },
) {
  const body = new FormData();
  for (const [k, v] of Object.entries(fields)) body.append(k, v);
  if (file) body.append("file", new File([file.text], file.name, { type: "application/geo+json" }));
  const request = new Request(`${ORIGIN}/checks`, { method: "POST", body, headers: { Cookie: cookie } });
  return run(() => checksPage.action(args(request)));
}

const fileErrors = (out: { data: unknown }) =>
  ((out.data as { result: { error: Record<string, string[]> } }).result.error ?? {}) as Record<string, string[]>;

let jobsStarted: number[] = [];
afterEach(async () => {
  // Let background check runs end before the next test (and the file's database) goes on.
  const ids = db().$client.prepare("select id from jobs where status in ('queued', 'running')").pluck().all() as number[];
  await Promise.all([...ids, ...jobsStarted].map((id) => jobFinished(id)));
  jobsStarted = [];
});

describe("margin reconstructions (editors)", () => {
  it("stores a good file, lists it with its stated uncertainty, and uses it at once when asked (a check run)", async () => {
    const editor = await personWithSession(["editor"]);
    const site = createTestSite(db(), { latitude: 58, longitude: -64 });
    // A minimum-limiting date at 12,000 cal BP where the file keeps the ice until ~10,500: a conflict.
    const det = createTestDetermination(db(), { sampleId: createTestSample(db(), { siteId: site.id }).id, c14AgeYr: 10300 });
    calibrateDeterminations(db(), [det.id]);
    runChecksFor(db(), [det.id]);
    const out = await send(
      editor.cookie,
      { intent: "upload", name: "Square test ice (invented)", uncertaintyYr: "200", useNow: "on" },
      { text: JSON.stringify(isochrones([14000, 12000, 10500, 9000])), name: "square.geojson" },
    );
    expect(out.status).toBe(302);
    const stored = db()
      .$client.prepare("select id, uncertainty_yr as u, used_for_checks as used from reconstructions where name = ?")
      .get("Square test ice (invented)") as { id: number; u: number; used: number };
    expect(stored).toMatchObject({ u: 200, used: 1 });
    expect(count("select count(*) from reconstructions where used_for_checks = 1")).toBe(1);
    expect(count("select count(*) from audit_log where action = 'reconstruction.add' and entity_id = ?", String(stored.id))).toBe(
      1,
    );
    const job = db().$client.prepare("select id from jobs where kind = 'checks' order by id desc").pluck().get() as number;
    await jobFinished(job);
    const r = db()
      .$client.prepare(`select severity, message from check_results where determination_id = ? and "check" = 'reconstruction'`)
      .get(det.id) as { severity: string; message: string };
    expect(r.message).toContain("Square test ice (invented)");
    expect(r.severity).toBe("conflict");

    const page = await run(() => checksPage.loader(args(get("/checks", { cookie: editor.cookie }))));
    const listed = (
      page.data as {
        reconstructions: { id: number; uncertaintyYr: number; isochrones: number; usedForChecks: boolean; oldestCalBp: number }[];
      }
    ).reconstructions.find((x) => x.id === stored.id);
    expect(listed).toMatchObject({ uncertaintyYr: 200, isochrones: 4, usedForChecks: true, oldestCalBp: 14000 });
  });

  it("takes the uncertainty from the file when the form leaves it out, and refuses a file that states none", async () => {
    const editor = await personWithSession(["editor"]);
    const ok = await send(
      editor.cookie,
      { intent: "upload", name: "Stated in the file (invented)" },
      { text: JSON.stringify(isochrones([12000, 11000], { age_uncertainty_yr: 350 })), name: "stated.json" },
    );
    expect(ok.status).toBe(302);
    expect(count("select uncertainty_yr from reconstructions where name = 'Stated in the file (invented)'")).toBe(350);
    const none = await send(
      editor.cookie,
      { intent: "upload", name: "No uncertainty (invented)" },
      { text: JSON.stringify(isochrones([12000, 11000])), name: "none.geojson" },
    );
    expect(none.status).toBe(400);
    expect(fileErrors(none).uncertaintyYr?.[0]).toMatch(/State the uncertainty/);
    expect(count("select count(*) from reconstructions where name = 'No uncertainty (invented)'")).toBe(0);
  });

  it("lists every problem of a bad file at once and stores nothing", async () => {
    const editor = await personWithSession(["editor"]);
    const before = count("select count(*) from reconstructions");
    const bad = isochrones([12000, 11000, 10000]) as { features: { properties: Record<string, unknown>; geometry: unknown }[] };
    bad.features[0].properties.age_cal_bp = "twelve thousand";
    bad.features[1].geometry = {
      type: "LineString",
      coordinates: [
        [-64, 58],
        [-63, 58],
      ],
    };
    (bad.features[2].geometry as { coordinates: number[][][] }).coordinates[0].pop();
    const out = await send(
      editor.cookie,
      { intent: "upload", name: "Broken (invented)", uncertaintyYr: "300" },
      { text: JSON.stringify(bad), name: "bad.geojson" },
    );
    expect(out.status).toBe(400);
    const problems = fileErrors(out).file!;
    expect(problems).toHaveLength(3);
    expect(problems[0]).toMatch(/^Feature 1: age_cal_bp must be a number/);
    expect(problems[1]).toMatch(/^Feature 2: the geometry must be a Polygon or MultiPolygon, not LineString/);
    expect(problems[2]).toMatch(/^Feature 3: a ring must end where it starts/);

    const notJson = await send(
      editor.cookie,
      { intent: "upload", name: "Not JSON (invented)", uncertaintyYr: "300" },
      { text: "{ isochrones: oops", name: "x.json" },
    );
    expect(notJson.status).toBe(400);
    expect(fileErrors(notJson).file![0]).toMatch(/not valid JSON/);
    const binary = await send(
      editor.cookie,
      { intent: "upload", name: "Binary (invented)", uncertaintyYr: "300" },
      { text: new Uint8Array([0xff, 0xfe, 0x00, 0x81]), name: "x.geojson" },
    );
    expect(fileErrors(binary).file![0]).toMatch(/not UTF-8/);
    const wrongKind = await send(
      editor.cookie,
      { intent: "upload", name: "Shapefile (invented)", uncertaintyYr: "300" },
      { text: "x", name: "ice.shp" },
    );
    expect(fileErrors(wrongKind).file![0]).toMatch(/\.geojson or \.json/);
    expect(count("select count(*) from reconstructions")).toBe(before);
  });

  it("refuses a file over RECONSTRUCTION_MAX_BYTES, and the server lets such a form through to say so", async () => {
    const editor = await personWithSession(["editor"]);
    const max = 8 * 1024 * 1024; // the default of RECONSTRUCTION_MAX_BYTES
    const out = await send(
      editor.cookie,
      { intent: "upload", name: "Too big (invented)", uncertaintyYr: "300" },
      { text: new Uint8Array(max + 1), name: "big.geojson" },
    );
    expect([400, 413]).toContain(out.status); // 413 when the browser declares the length up front
    expect(fileErrors(out).file![0]).toMatch(/larger than 8\.0 MB/);
    expect(bodyLimitFor("/checks", { uploadMaxBytes: 10 * 1024 * 1024 })).toBeGreaterThan(max);
  });

  it("choosing another reconstruction is audited and reruns the checks; choosing none turns the check off", async () => {
    const editor = await personWithSession(["editor"]);
    await send(
      editor.cookie,
      { intent: "upload", name: "Choice A (invented)", uncertaintyYr: "300" },
      { text: JSON.stringify(isochrones([12000, 11000])), name: "a.json" },
    );
    const a = count("select id from reconstructions where name = 'Choice A (invented)'");
    const jobsBefore = count("select count(*) from jobs where kind = 'checks'");
    const use = await send(editor.cookie, { intent: "use", id: String(a) });
    expect(use.status).toBe(302);
    expect(count("select id from reconstructions where used_for_checks = 1")).toBe(a);
    expect(count("select count(*) from jobs where kind = 'checks'")).toBe(jobsBefore + 1);
    expect(count("select count(*) from audit_log where action = 'reconstruction.choose' and entity_id = ?", String(a))).toBe(1);
    const off = await send(editor.cookie, { intent: "use", id: "none" });
    expect(off.status).toBe(302);
    expect(count("select count(*) from reconstructions where used_for_checks = 1")).toBe(0);
    expect((await send(editor.cookie, { intent: "use", id: "999999" })).status).toBe(404);
    expect((await send(editor.cookie, { intent: "dance" })).status).toBe(400);
    // Two check runs start in the writer thread meanwhile; on a loaded machine this takes 15–35 s.
  }, 90_000);
});

describe("the whole-registry check run from the page, and who follows jobs", () => {
  it("an editor starts the run; reviewers follow check runs but not recalibrations; a modeller follows neither", async () => {
    const editor = await personWithSession(["editor"]);
    const reviewer = await personWithSession(["reviewer"]);
    const modeller = await personWithSession(["modeller"]);
    const out = await send(editor.cookie, { intent: "run" });
    expect(out.status).toBe(302);
    const checkJob = db().$client.prepare("select id from jobs where kind = 'checks' order by id desc").pluck().get() as number;
    expect(count("select created_by from jobs where id = ?", checkJob)).toBe(editor.id);
    const follow = (cookie: string, id: number) =>
      run(() => jobsRoute.loader(args(get(`/api/jobs/${id}`, { cookie }), { id: String(id) })));
    expect((await follow(reviewer.cookie, checkJob)).status).toBe(200);
    expect((await follow(modeller.cookie, checkJob)).status).toBe(403);
    const recal = startJob(db(), { kind: "recalibrate", total: 0, params: {}, actorId: editor.id }, () => "nothing to do");
    jobsStarted.push(recal.jobId);
    expect((await follow(reviewer.cookie, recal.jobId)).status).toBe(403);
    expect((await follow(editor.cookie, recal.jobId)).status).toBe(200);
    // Whoever started a job may follow it.
    const own = startJob(db(), { kind: "recalibrate", total: 0, params: {}, actorId: modeller.id }, () => "nothing to do");
    jobsStarted.push(own.jobId);
    expect((await follow(modeller.cookie, own.jobId)).status).toBe(200);
    expect((await follow(reviewer.cookie, 999999)).status).toBe(404);
    await jobFinished(checkJob);
    expect(count("select status = 'done' from jobs where id = ?", checkJob)).toBe(1);
  });
});

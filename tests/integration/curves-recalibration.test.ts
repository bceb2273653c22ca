import { eq } from "drizzle-orm";
import { describe, expect, test } from "vitest";
import { createSession } from "#app/auth/session.server.ts";
import { getDb } from "#app/db/client.server.ts";
import { auditLog, calibrations, curves, jobs } from "#app/db/schema.ts";
import { calibrateDeterminations, calibrationHistory, currentCalibration } from "#app/models/calibration/calibrations.server.ts";
import { addCurveVersion } from "#app/models/calibration/curve-versions.server.ts";
import { activeCurve, curveWindow, importCurve } from "#app/models/calibration/curves.server.ts";
import { getJob, jobFinished } from "#app/models/jobs.server.ts";
import { startRecalibration } from "#app/models/calibration/recalibration.server.ts";
import { loader as jobLoader } from "#app/routes/resources/jobs.ts";
import { action as curvesAction } from "#app/routes/admin/curves.tsx";
import { createTestDetermination, createTestUser } from "#tests/factories.ts";

/**
 * A tiny synthetic straight curve c(θ) = 0.9·θ + offset with constant σ, so the median of a
 * calibrated age is known in closed form: θ = (μ − offset) / 0.9 (CHECK_VALUES A4: a straight
 * curve gives a symmetric posterior centred on the matching calendar age).
 */
function straightCurveCsv(offset: number, { step = 10, sigma = 15, to = 20000 } = {}): string {
  const lines = ["cal_bp,c14_age,c14_sigma"];
  for (let cal = to; cal >= 0; cal -= step) lines.push(`${cal},${0.9 * cal + offset},${sigma}`);
  return lines.join("\n") + "\n";
}

const meta = (name: string, version: string) => ({
  name,
  displayName: `Frostline test curve ${name}`,
  kind: "atmospheric" as const,
  version,
  citation: "Invented straight curve for tests only (fictional).",
  maxStep: 10,
});

async function cookieFor(roles: ("editor" | "contributor")[]) {
  const user = createTestUser(getDb(), roles);
  const { cookie } = await createSession(user.id, new Request("http://localhost/"));
  return { user, cookie: cookie.split(";")[0]! };
}

function curvesForm(fields: Record<string, string | File>) {
  const fd = new FormData();
  for (const [k, v] of Object.entries(fields)) fd.append(k, v);
  return fd;
}

function callCurves(fd: FormData, cookie?: string) {
  const request = new Request("http://localhost/curves", {
    method: "POST",
    body: fd,
    headers: cookie ? { Cookie: cookie } : {},
  });
  return curvesAction({ request, params: {}, context: {} } as never);
}

const csvFile = (text: string, name = "curve.csv") => new File([text], name, { type: "text/csv" });

describe("calibrations across curve versions", () => {
  test("stores the current result and keeps earlier ones labelled with their curve version", async () => {
    const db = getDb();
    importCurve(db, meta("frostline", "1"), straightCurveCsv(100));
    const det = createTestDetermination(db, { c14AgeYr: 9000, c14ErrorYr: 40, curveName: "frostline" });

    expect(calibrateDeterminations(db, [det.id])).toEqual({ calibrated: 1, failed: 0 });
    const first = currentCalibration(db, det.id)!;
    expect(first.curveLabel).toBe("Frostline test curve frostline (1)");
    expect(first.medianCalBp!).toBeCloseTo((9000 - 100) / 0.9, 0);
    expect(first.density).toBeInstanceOf(Buffer);

    // Calibrating again on the same version replaces that result rather than piling up copies.
    calibrateDeterminations(db, [det.id]);
    expect(calibrationHistory(db, det.id)).toHaveLength(1);

    const editor = createTestUser(db, ["editor"]);
    const added = addCurveVersion(db, meta("frostline", "2"), straightCurveCsv(300), { id: editor.id });
    expect(added.replaced.map((c) => c.version)).toEqual(["1"]);
    expect(activeCurve(db, "frostline")!.version).toBe("2");
    const versions = db.select().from(curves).where(eq(curves.name, "frostline")).all();
    expect(versions.filter((c) => c.active).map((c) => c.version)).toEqual(["2"]);

    const { jobId, total } = startRecalibration(db, { curveName: "frostline", actorId: editor.id, reason: "test" });
    expect(total).toBe(1);
    await jobFinished(jobId);
    expect(getJob(db, jobId)).toMatchObject({ status: "done", progress: 1, total: 1 });

    const history = calibrationHistory(db, det.id);
    expect(history).toHaveLength(2);
    const current = history.find((h) => h.isCurrent)!;
    const earlier = history.find((h) => !h.isCurrent)!;
    expect(current.curveVersion).toBe("2");
    expect(current.medianCalBp!).toBeCloseTo((9000 - 300) / 0.9, 0);
    expect(earlier.curveVersion).toBe("1");
    expect(earlier.curveLabel).toContain("(1)");
    expect(earlier.medianCalBp!).toBeCloseTo((9000 - 100) / 0.9, 0);
    // the recalibration is audited
    const audits = db
      .select()
      .from(auditLog)
      .where(eq(auditLog.entityId, String(jobId)))
      .all();
    expect(audits.map((a) => a.action)).toContain("calibration.recalibrate");
  });

  test("curveWindow returns the rows around a window, thinned to the limit", () => {
    const db = getDb();
    const id = activeCurve(db, "intcal20")!.id;
    const rows = curveWindow(db, id, 12000, 11800);
    expect(rows[0]!.calBp).toBeLessThanOrEqual(11800);
    expect(rows.at(-1)!.calBp).toBeGreaterThanOrEqual(12000);
    expect(rows.every((r, i) => i === 0 || r.calBp > rows[i - 1]!.calBp)).toBe(true);
    const wide = curveWindow(db, id, 50000, 0);
    expect(wide.length).toBeLessThanOrEqual(400);
    expect(wide[0]!.calBp).toBe(0);
    expect(wide.at(-1)!.calBp).toBeGreaterThanOrEqual(50000);
    expect(wide.at(-1)!.calBp).toBeLessThanOrEqual(50020);
  });
});

describe("/curves", () => {
  test("a bad file gets a message at the file field and nothing is written", async () => {
    const db = getDb();
    const { cookie } = await cookieFor(["editor"]);
    const curvesBefore = db.select().from(curves).all().length;
    const auditBefore = db.select().from(auditLog).all().length;
    const fields = {
      intent: "import",
      name: "frostbad",
      displayName: "Frost bad",
      kind: "atmospheric",
      version: "1",
      citation: "Invented curve for tests only (fictional).",
      maxStep: "20",
    };
    const negativeSigma = "cal_bp,c14_age,c14_sigma\n0,100,10\n10,110,-5\n20,120,10\n";
    const withGap = "cal_bp,c14_age,c14_sigma\n0,100,10\n10,110,10\n200,300,10\n";
    const fakeIntcal = straightCurveCsv(0, { step: 20, to: 25000 });
    const cases: [Record<string, string>, string, RegExp][] = [
      [fields, negativeSigma, /must be positive/],
      [fields, withGap, /exceeds the maximum step of 20 years/],
      [{ ...fields, name: "intcal20", version: "2099" }, fakeIntcal, /does not match its published values/],
      [fields, "just some text\nwithout columns\n", /no "cal_bp" column/],
    ];
    for (const [f, text, message] of cases) {
      const result = (await callCurves(curvesForm({ ...f, file: csvFile(text) }), cookie)) as any;
      expect(result.init.status).toBe(400);
      expect(result.data.result.error.file.join(" ")).toMatch(message);
    }
    // form-level validation lands on its field too
    const noFile = (await callCurves(curvesForm({ ...fields, maxStep: "0" }), cookie)) as any;
    expect(noFile.init.status).toBe(400);
    expect(noFile.data.result.error.file.join(" ")).toMatch(/Choose the curve's CSV file/);
    expect(noFile.data.result.error.maxStep.join(" ")).toMatch(/at least 1 year/);
    const taken = (await callCurves(
      curvesForm({ ...fields, name: "intcal20", version: "2020", file: csvFile(negativeSigma) }),
      cookie,
    )) as any;
    expect(taken.data.result.error.version.join(" ")).toMatch(/already stored/);

    expect(db.select().from(curves).all().length).toBe(curvesBefore);
    expect(db.select().from(auditLog).all().length).toBe(auditBefore);
    expect(activeCurve(db, "intcal20")!.version).toBe("2020");
  });

  test("unknown intent is a 400", async () => {
    const { cookie } = await cookieFor(["editor"]);
    const refused = await callCurves(curvesForm({ intent: "explode" }), cookie).then(
      () => null,
      (e: unknown) => e,
    );
    expect((refused as Response).status).toBe(400);
  });

  test("adding a version and activating another recalibrate in the background with progress", async () => {
    const db = getDb();
    const { user, cookie } = await cookieFor(["editor"]);
    importCurve(db, meta("frostjobs", "1"), straightCurveCsv(100));
    const dets = Array.from({ length: 600 }, (_, i) =>
      createTestDetermination(db, { c14AgeYr: 5000 + i, c14ErrorYr: 40, curveName: "frostjobs" }),
    );
    calibrateDeterminations(
      db,
      dets.map((d) => d.id),
    );

    const added = await callCurves(
      curvesForm({
        intent: "import",
        name: "frostjobs",
        displayName: "Frostline jobs curve",
        kind: "atmospheric",
        version: "2",
        citation: "Invented curve for tests only (fictional).",
        maxStep: "10",
        file: csvFile(straightCurveCsv(300)),
      }),
      cookie,
    );
    expect(added).toBeInstanceOf(Response);
    expect((added as Response).status).toBe(302);
    const v2 = activeCurve(db, "frostjobs")!;
    expect(v2.version).toBe("2");
    expect(
      db
        .select()
        .from(auditLog)
        .where(eq(auditLog.action, "curve.import"))
        .all()
        .some((a) => a.entityId === String(v2.id)),
    ).toBe(true);

    const job = db.select().from(jobs).all().at(-1)!;
    expect(job.kind).toBe("recalibrate");
    expect(job.total).toBe(600);

    // Follow it through the polling route, as the page does, one event-loop turn at a time.
    const seen: number[] = [];
    const jobRequest = () =>
      jobLoader({
        request: new Request(`http://localhost/api/jobs/${job.id}`, { headers: { Cookie: cookie } }),
        params: { id: String(job.id) },
        context: {},
      } as never) as Promise<Response>;
    for (;;) {
      const res = await jobRequest();
      expect(res.status).toBe(200);
      const body = (await res.json()) as { status: string; progress: number; total: number };
      seen.push(body.progress);
      if (body.status === "done" || body.status === "failed") {
        expect(body).toMatchObject({ status: "done", progress: 600, total: 600 });
        break;
      }
      await new Promise((r) => setImmediate(r));
    }
    expect(seen.some((p) => p > 0 && p < 600)).toBe(true);
    expect([...seen].sort((a, b) => a - b)).toEqual(seen);
    await jobFinished(job.id);

    for (const d of dets.slice(0, 3)) {
      const history = calibrationHistory(db, d.id);
      expect(history.map((h) => `${h.curveVersion}:${h.isCurrent}`).sort()).toEqual(["1:false", "2:true"]);
    }

    // Activating version 1 again makes it the only active one and recalibrates back onto it.
    const v1 = db
      .select()
      .from(curves)
      .where(eq(curves.name, "frostjobs"))
      .all()
      .find((c) => c.version === "1")!;
    const activated = await callCurves(curvesForm({ intent: "activate", curveId: String(v1.id) }), cookie);
    expect((activated as Response).status).toBe(302);
    const versions = db.select().from(curves).where(eq(curves.name, "frostjobs")).all();
    expect(versions.filter((c) => c.active).map((c) => c.version)).toEqual(["1"]);
    const job2 = db.select().from(jobs).all().at(-1)!;
    await jobFinished(job2.id);
    expect(getJob(db, job2.id)).toMatchObject({ status: "done", progress: 600 });
    const cur = currentCalibration(db, dets[0]!.id)!;
    expect(cur.curveId).toBe(v1.id);
    expect(calibrationHistory(db, dets[0]!.id)).toHaveLength(2);
    const activation = db.select().from(auditLog).where(eq(auditLog.action, "curve.activate")).all().at(-1)!;
    expect(activation.actorId).toBe(user.id);
    expect(activation.entityId).toBe(String(v1.id));
    expect(db.select().from(calibrations).where(eq(calibrations.determinationId, dets[0]!.id)).all()).toHaveLength(2);
  });

  test("job progress is for signed-in editors only", async () => {
    const db = getDb();
    const { jobId } = startRecalibration(db, { curveName: "no-such-curve", actorId: null, reason: "test" });
    await jobFinished(jobId);
    const call = (cookie?: string) =>
      jobLoader({
        request: new Request(`http://localhost/api/jobs/${jobId}`, { headers: cookie ? { Cookie: cookie } : {} }),
        params: { id: String(jobId) },
        context: {},
      } as never) as Promise<Response>;
    expect((await call()).status).toBe(401);
    expect((await call((await cookieFor(["contributor"])).cookie)).status).toBe(403);
    const ok = await call((await cookieFor(["editor"])).cookie);
    expect(ok.status).toBe(200);
    expect(await ok.json()).toMatchObject({ id: jobId, status: "done", total: 0 });
    const missing = (await jobLoader({
      request: new Request("http://localhost/api/jobs/999999", { headers: { Cookie: (await cookieFor(["editor"])).cookie } }),
      params: { id: "999999" },
      context: {},
    } as never)) as Response;
    expect(missing.status).toBe(404);
  });
});

// The public loaders that had no test: the home page's totals, the API documentation's worked
// example and settings, and the curve-window resource (by name, by curve id, and its refusals).
import { eq } from "drizzle-orm";
import { describe, expect, it } from "vitest";
import { getDb } from "#app/db/client.server.ts";
import { curves } from "#app/db/schema.ts";
import { loader as homeLoader } from "#app/routes/home.tsx";
import { loader as apiDocsLoader } from "#app/routes/api-docs.tsx";
import { loader as curveWindowLoader } from "#app/routes/resources/curve-window.ts";
import { createTestDetermination, createTestSite, createTestUser } from "#tests/factories.ts";
import { args, get, personWithSession, run } from "#tests/support/auth.ts";

describe("home loader", () => {
  it("counts what the registry holds, leaving withdrawn dates out, and says whether someone is signed in", async () => {
    const db = getDb();
    const before = ((await run(() => homeLoader(args(get("/"))))).data as { totals: Record<string, number> }).totals;
    const contributor = createTestUser(db, ["contributor"]);
    createTestSite(db);
    createTestDetermination(db, { contributorId: contributor.id });
    createTestDetermination(db, { contributorId: contributor.id, grade: 3, status: "graded" });
    createTestDetermination(db, { contributorId: contributor.id, method: "luminescence", curveName: null });
    createTestDetermination(db, { contributorId: contributor.id, status: "withdrawn" });
    const anonymous = await run(() => homeLoader(args(get("/"))));
    expect(anonymous.status).toBe(200);
    const { totals, signedIn } = anonymous.data as { totals: Record<string, number>; signedIn: boolean };
    expect(signedIn).toBe(false);
    expect(totals.determinations - before.determinations).toBe(3);
    expect(totals.radiocarbon - before.radiocarbon).toBe(2);
    expect(totals.luminescence - before.luminescence).toBe(1);
    expect(totals.graded - before.graded).toBe(1);
    // Each determination without a sample or lab given gets its own; plus the site made above.
    expect(totals.sites - before.sites).toBe(5);
    expect(totals.labs - before.labs).toBe(4);
    const person = await personWithSession([]);
    const signed = await run(() => homeLoader(args(get("/", { cookie: person.cookie }))));
    expect((signed.data as { signedIn: boolean }).signedIn).toBe(true);
  });
});

describe("api-docs loader", () => {
  type Docs = {
    base: string;
    uploadMaxMb: number;
    calibrated: { results: { id: string; median_cal_bp: number }[]; curves: Record<string, { version: string }> } | null;
    perPage: { default: number; max: number };
    releaseSlug: string;
  };

  it("computes its calibration example for real and names the settings the API runs with", async () => {
    const res = await run(() => apiDocsLoader(args(get("/api-docs"))));
    expect(res.status).toBe(200);
    const docs = res.data as Docs;
    expect(docs.base).toBe("http://localhost");
    expect(docs.uploadMaxMb).toBe(10);
    // 10,250 ± 45 ¹⁴C yr BP on IntCal20: median near 11,950 cal BP (from memory; the bounds the calibrate page's browser test uses).
    const [result] = docs.calibrated!.results;
    expect(result!.id).toBe("a1");
    expect(result!.median_cal_bp).toBeGreaterThan(11800);
    expect(result!.median_cal_bp).toBeLessThan(12100);
    expect(Object.keys(docs.calibrated!.curves)).toEqual(["intcal20"]);
    expect(docs.perPage.max).toBeGreaterThanOrEqual(docs.perPage.default);
    // No release yet: the examples show the placeholder.
    expect(docs.releaseSlug).toBe("{slug}");
  });

  it("uses the newest release's slug in its examples once one exists", async () => {
    const db = getDb();
    const editor = createTestUser(db, ["editor"]);
    db.$client
      .prepare(
        `insert into releases (slug, name, version, filter, curve_versions, item_count, checksum, created_by, published_at)
         values ('docs-example-1', 'Docs example', '1', '{}', '[]', 0, 'x', ?, ?)`,
      )
      .run(editor.id, Date.now());
    const docs = (await run(() => apiDocsLoader(args(get("/api-docs"))))).data as Docs;
    expect(docs.releaseSlug).toBe("docs-example-1");
  });
});

describe("curve-window resource", () => {
  type Window = {
    curve: { id: number; name: string; version: string };
    window: { from: number; to: number };
    points: { calBp: number }[];
  };
  const fetchWindow = (query: string) => run(() => curveWindowLoader(args(get(`/api/curve-window?${query}`))));

  it("by name: the active curve's rows around the window, cacheable", async () => {
    const res = await fetchWindow("curve=intcal20&from=12500&to=11500");
    expect(res.status).toBe(200);
    expect(res.headers.get("Cache-Control")).toBe("public, max-age=300");
    const body = res.data as Window;
    expect(body.curve.name).toBe("intcal20");
    expect(body.window).toEqual({ from: 12500, to: 11500 });
    expect(body.points.length).toBeGreaterThan(10);
    // The rows reach just past both ends of the window (one row either side), in calendar order.
    expect(body.points[0]!.calBp).toBeLessThanOrEqual(11500);
    expect(body.points.at(-1)!.calBp).toBeGreaterThanOrEqual(12500);
    expect(body.points[1]!.calBp).toBeGreaterThan(11500 - 50);
  });

  it("by curve_id: that curve whatever its name, and 404 for an id that is none", async () => {
    const marine = getDb().select().from(curves).where(eq(curves.name, "marine20")).get()!;
    const res = await fetchWindow(`curve_id=${marine.id}&from=9000&to=8000`);
    expect(res.status).toBe(200);
    expect((res.data as Window).curve).toMatchObject({ id: marine.id, name: "marine20" });
    const none = await fetchWindow("curve_id=987654&from=9000&to=8000");
    expect([none.status, none.data]).toEqual([404, { error: "No such curve." }]);
  });

  it("refuses a window without both ends, and a curve name it does not know", async () => {
    for (const q of ["curve=intcal20&from=12500", "curve=intcal20&to=11500", "curve=intcal20&from=x&to=1"]) {
      const res = await fetchWindow(q);
      expect([res.status, res.data], q).toEqual([400, { error: "Give the window as from and to, in cal BP." }]);
    }
    const unknown = await fetchWindow("curve=no-such-curve&from=2&to=1");
    expect(unknown.status).toBe(404);
  });
});

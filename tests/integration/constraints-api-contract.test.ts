import Papa from "papaparse";
import { beforeEach, describe, expect, it } from "vitest";
import { seedForFile } from "#tests/support/test-db.ts";
import { getDb } from "#app/db/client.server.ts";
import { createToken } from "#app/models/accounts/tokens.server.ts";
import { releaseChecksum } from "#app/models/releases/canonical.server.ts";
import * as constraintsApi from "#app/routes/api/v1/constraints.ts";
import * as releaseApi from "#app/routes/api/v1/release.ts";
import * as releasesApi from "#app/routes/api/v1/releases.ts";
import { seedDemo } from "#seed/seed.server.ts";
import { args, run } from "#tests/support/auth.ts";
import { createTestUser } from "#tests/factories.ts";

/*
 * The API contract of issue 10 §3, checked from outside exactly as written: paths, parameter
 * names, fields, status codes, and a 400 that names each malformed parameter.
 */

const ORIGIN = "http://localhost";
let modellerToken: string;
let editorToken: string;

seedForFile(async () => {
  const db = getDb();
  await seedDemo(db, { size: "small" });
  const modeller = createTestUser(db, ["modeller"]);
  const editor = createTestUser(db, ["editor"]);
  modellerToken = createToken(db, modeller.id, "contract", { actorId: modeller.id }).token;
  editorToken = createToken(db, editor.id, "contract", { actorId: editor.id }).token;
});

const auth = (token: string | null): Record<string, string> => (token ? { Authorization: `Bearer ${token}` } : {});
const getConstraints = (query: string, token: string | null = modellerToken) =>
  run(() => constraintsApi.loader(args(new Request(`${ORIGIN}/api/v1/constraints?${query}`, { headers: auth(token) }))));
const postConstraints = (query: string, body: string, token: string | null = modellerToken) =>
  run(() =>
    constraintsApi.action(
      args(
        new Request(`${ORIGIN}/api/v1/constraints?${query}`, {
          method: "POST",
          headers: { ...auth(token), "Content-Type": "application/geo+json" },
          body,
        }),
      ),
    ),
  );
const postRelease = (body: unknown, token: string | null = editorToken) =>
  run(() =>
    releasesApi.action(
      args(
        new Request(`${ORIGIN}/api/v1/releases`, {
          method: "POST",
          headers: { ...auth(token), "Content-Type": "application/json" },
          body: JSON.stringify(body),
        }),
      ),
    ),
  );
const getRelease = (slug: string, query = "") =>
  run(() => releaseApi.loader(args(new Request(`${ORIGIN}/api/v1/releases/${slug}${query ? `?${query}` : ""}`), { slug })));

const ITEM_FIELDS = [
  "id",
  "lab_code",
  "latitude",
  "longitude",
  "method",
  "constraint_kind",
  "grade",
  "median_cal_bp",
  "hpd68",
  "hpd95",
];
const WINDOW = "bbox=-70,50,-50,65&min_grade=2&from_cal_bp=8000&to_cal_bp=12000&methods=radiocarbon,luminescence&kinds=minimum";

describe("GET /api/v1/constraints", () => {
  it("without a token: 401", async () => {
    expect((await getConstraints("", null)).status).toBe(401);
  });

  it("format=json: filter, count, curves, exported_at, citations and constraints with the contract's fields", async () => {
    const out = await getConstraints(`${WINDOW}&format=json`);
    expect(out.status).toBe(200);
    expect(out.headers.get("Content-Type")).toMatch(/^application\/json/);
    const body = out.data as Record<string, any>;
    for (const key of ["filter", "count", "curves", "exported_at", "citations", "constraints"]) expect(body).toHaveProperty(key);
    expect(body.filter).toMatchObject({ bbox: "-70,50,-50,65", min_grade: "2", from_cal_bp: "8000", to_cal_bp: "12000" });
    expect(new Date(body.exported_at).toISOString()).toBe(body.exported_at);
    expect(body.count).toBe(body.constraints.length);
    expect(body.count).toBeGreaterThan(0);
    for (const c of body.constraints) {
      for (const f of ITEM_FIELDS) expect(c, f).toHaveProperty(f);
      expect(c).not.toHaveProperty("density");
      expect(c.grade).toBeGreaterThanOrEqual(2);
      expect(["radiocarbon", "luminescence"]).toContain(c.method);
      expect(c.constraint_kind).toBe("minimum");
      expect(c.longitude).toBeGreaterThanOrEqual(-70);
      expect(c.latitude).toBeLessThanOrEqual(65);
      // 95.4 % range overlaps the window (the documented default)
      expect(Math.max(...c.hpd95.map((r: { from: number }) => r.from))).toBeGreaterThanOrEqual(8000);
      expect(Math.min(...c.hpd95.map((r: { to: number }) => r.to))).toBeLessThanOrEqual(12000);
    }
    expect(Array.isArray(body.curves) && body.curves.every((c: object) => "curve" in c && "version" in c)).toBe(true);
    expect(Array.isArray(body.citations)).toBe(true);
  });

  it("densities=true: each constraint has density {start_cal_bp, step, p}", async () => {
    const out = await getConstraints(`${WINDOW}&format=json&densities=true`);
    const body = out.data as { constraints: { density: { start_cal_bp: number; step: number; p: number[] } }[] };
    for (const c of body.constraints) {
      expect(Object.keys(c.density)).toEqual(["start_cal_bp", "step", "p"]);
      expect(c.density.step).toBe(1);
      const sum = c.density.p.reduce((a, b) => a + b, 0);
      expect(sum).toBeCloseTo(1, 3);
    }
  });

  it("format=csv and format=geojson carry the same selection", async () => {
    const json = (await getConstraints(`${WINDOW}&format=json`)).data as { count: number; constraints: { id: number }[] };
    const csv = await getConstraints(`${WINDOW}&format=csv`);
    expect(csv.headers.get("Content-Type")).toMatch(/^text\/csv/);
    const rows = Papa.parse<Record<string, string>>(csv.data as string, { header: true, skipEmptyLines: true }).data;
    expect(rows.map((r) => Number(r.id))).toEqual(json.constraints.map((c) => c.id));
    for (const f of ITEM_FIELDS.filter((f) => !f.startsWith("hpd"))) expect(Object.keys(rows[0]!)).toContain(f);
    const geo = await getConstraints(`${WINDOW}&format=geojson`);
    expect(geo.headers.get("Content-Type")).toMatch(/^application\/geo\+json/);
    const fc = geo.data as { type: string; metadata: { count: number }; features: { id: number; geometry: { type: string } }[] };
    expect(fc.type).toBe("FeatureCollection");
    expect(fc.metadata.count).toBe(json.count);
    expect(fc.features.map((f) => f.id)).toEqual(json.constraints.map((c) => c.id));
    expect(fc.features[0].geometry.type).toBe("Point");
  });

  const malformed: [string, string][] = [
    ["bbox=1,2,3", "bbox"],
    ["bbox=-70,50,-50,north", "bbox"],
    ["min_grade=excellent", "min_grade"],
    ["min_grade=7", "min_grade"],
    ["from_cal_bp=ten", "from_cal_bp"],
    ["to_cal_bp=12k", "to_cal_bp"],
    ["time_mode=newest", "time_mode"],
    ["methods=radiocarbon,guesswork", "methods"],
    ["kinds=sideways", "kinds"],
    ["format=xlsx", "format"],
    ["densities=maybe", "densities"],
    ["format=csv&densities=true", "densities"],
    ["colour=blue", "colour"],
  ];
  for (const [query, name] of malformed) {
    it(`${query} → 400 naming ${name}`, async () => {
      const out = await getConstraints(query);
      expect(out.status).toBe(400);
      const errors = (out.data as { errors: string[] }).errors;
      expect(
        errors.some((e) => e.startsWith(`${name}:`)),
        JSON.stringify(errors),
      ).toBe(true);
    });
  }

  it("two malformed parameters → one 400 naming both", async () => {
    const out = await getConstraints("bbox=x&min_grade=y");
    expect(out.status).toBe(400);
    const errors = (out.data as { errors: string[] }).errors;
    expect(errors.some((e) => e.startsWith("bbox:"))).toBe(true);
    expect(errors.some((e) => e.startsWith("min_grade:"))).toBe(true);
  });
});

describe("POST /api/v1/constraints (a GeoJSON region)", () => {
  const square = {
    type: "Polygon",
    coordinates: [
      [
        [-70, 50],
        [-50, 50],
        [-50, 65],
        [-70, 65],
        [-70, 50],
      ],
    ],
  };

  it("selects inside the polygon, with the other parameters from the URL", async () => {
    const viaPost = await postConstraints("min_grade=2&format=json", JSON.stringify(square));
    expect(viaPost.status).toBe(200);
    const viaBox = await getConstraints("bbox=-70,50,-50,65&min_grade=2&format=json");
    const ids = (o: typeof viaPost) => (o.data as { constraints: { id: number }[] }).constraints.map((c) => c.id);
    expect(ids(viaPost)).toEqual(ids(viaBox));
    expect((viaPost.data as { filter: { geometry: unknown } }).filter.geometry).toEqual(square);
  });

  it("a body that is not a GeoJSON polygon → 400 naming geometry; no token → 401", async () => {
    for (const body of ["{not json", JSON.stringify({ type: "Point", coordinates: [0, 0] })]) {
      const out = await postConstraints("format=json", body);
      expect(out.status).toBe(400);
      expect((out.data as { errors: string[] }).errors.some((e) => e.startsWith("geometry"))).toBe(true);
    }
    expect((await postConstraints("", JSON.stringify(square), null)).status).toBe(401);
  });
});

describe("/api/v1/releases", () => {
  let slug: string;
  let published: Awaited<ReturnType<typeof postRelease>>;

  beforeEach(async () => {
    published = await postRelease({
      name: "Contract release",
      description: "Grade 2 and better",
      filter: { min_grade: 2, bbox: "-70,50,-50,65" },
    });
    slug = (published.data as { slug: string }).slug;
  });

  it("POST with an editor token and {name, description, filter} → 201 {slug, checksum, count}", () => {
    expect(published.status).toBe(201);
    const body = published.data as { slug: string; checksum: string; count: number };
    expect(Object.keys(body).sort()).toEqual(["checksum", "count", "slug"]);
    expect(body.slug).toBe("contract-release-v1");
    expect(body.checksum).toMatch(/^[0-9a-f]{64}$/);
    expect(body.count).toBeGreaterThan(0);
  });

  it("POST: a modeller's token → 403, no token → 401, a malformed filter → 400 naming it, the same name and version → 409", async () => {
    expect((await postRelease({ name: "X", description: "", filter: {} }, modellerToken)).status).toBe(403);
    expect((await postRelease({ name: "X", description: "", filter: {} }, null)).status).toBe(401);
    const bad = await postRelease({ name: "Bad filter", description: "", filter: { min_grade: "top" } });
    expect(bad.status).toBe(400);
    expect((bad.data as { errors: string[] }).errors.some((e) => e.includes("min_grade"))).toBe(true);
    const again = await postRelease({ name: "Contract release", description: "", filter: { min_grade: 2 }, version: "1" });
    expect(again.status).toBe(409);
  });

  it("GET /api/v1/releases (no token) lists it", async () => {
    const out = await run(() => releasesApi.loader(args(new Request(`${ORIGIN}/api/v1/releases`))));
    expect(out.status).toBe(200);
    const list = (out.data as { releases: { slug: string; checksum: string; citation: string }[] }).releases;
    const mine = list.find((r) => r.slug === slug)!;
    expect(mine.checksum).toMatch(/^[0-9a-f]{64}$/);
    expect(mine.citation).toContain(mine.checksum);
  });

  it("GET /api/v1/releases/{slug} (no token): frozen items with checksum and citation; the checksum is reproducible", async () => {
    const out = await getRelease(slug, "format=json");
    expect(out.status).toBe(200);
    const body = out.data as { checksum: string; citation: string; constraints: { id: number }[] };
    expect(body.checksum).toMatch(/^[0-9a-f]{64}$/);
    expect(body.citation).toContain(body.checksum);
    for (const c of body.constraints) for (const f of ITEM_FIELDS) expect(c).toHaveProperty(f);
    expect(releaseChecksum(body.constraints)).toBe(body.checksum);
    const csv = await getRelease(slug, "format=csv");
    expect(csv.headers.get("Content-Type")).toMatch(/^text\/csv/);
    const geo = await getRelease(slug, "format=geojson");
    expect((geo.data as { features: unknown[] }).features).toHaveLength(body.constraints.length);
  });

  it("GET /api/v1/releases/{slug}: unknown → 404, format=pdf → 400 naming format", async () => {
    expect((await getRelease("no-such-release-v1")).status).toBe(404);
    const bad = await getRelease(slug, "format=pdf");
    expect(bad.status).toBe(400);
    expect((bad.data as { errors: string[] }).errors.some((e) => e.startsWith("format:"))).toBe(true);
  });
});

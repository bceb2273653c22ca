import Papa from "papaparse";
import { describe, expect, it } from "vitest";
import { seedForFile } from "#tests/support/test-db.ts";
import { getDb } from "#app/db/client.server.ts";
import { selectionIds } from "#app/models/registry/constraints.server.ts";
import { clearDensityTexts, densityTextHeld, warmDensityTexts } from "#app/models/releases/density-text.server.ts";
import { usageOf } from "#app/models/releases/downloads.server.ts";
import { releaseResponse } from "#app/models/releases/release-download.server.ts";
import { publishRelease, releaseById } from "#app/models/releases/releases.server.ts";
import { selectConstraints, selectionResponse } from "#app/models/releases/selection-download.server.ts";
import { selectionItems } from "#app/models/releases/selection.server.ts";
import { parseConstraintFilter, type ConstraintFilter } from "#app/utils/constraint-filter.ts";
import { seedDemo } from "#seed/seed.server.ts";
import * as summaryRoute from "#app/routes/resources/constraints-summary.ts";
import { args, get, personWithSession, run } from "#tests/support/auth.ts";
import { createTestUser } from "#tests/factories.ts";

/*
 * Downloads read their items while the response is written, and densities already written once are
 * served again from text held by the density's hash. Both must change nothing a modeller receives:
 * the metadata counted in SQL equals the count over the items, a second download (densities held)
 * is byte for byte the first, and every probability is the stored Float32 value to six significant
 * digits (toPrecision(6), computed here independently from the blob).
 */

function filter(query: string): ConstraintFilter {
  const parsed = parseConstraintFilter(new URLSearchParams(query));
  if (!parsed.ok) throw new Error(parsed.errors.join("; "));
  return parsed.filter;
}

const bytes = async (r: Response) => new Uint8Array(await r.arrayBuffer());
let releaseId = 0;
let modellerCookie = "";

seedForFile(async () => {
  const db = getDb();
  await seedDemo(db, { size: "small" });
  const editor = createTestUser(db, ["editor"]);
  modellerCookie = (await personWithSession(["modeller"])).cookie;
  releaseId = publishRelease(db, {
    name: "Streaming test",
    version: "1",
    filter: filter("min_grade=2"),
    userId: editor.id,
    baseUrl: "http://localhost/releases/",
  }).id;
});

describe("constraint downloads read as they are written", () => {
  it.each(["", "min_grade=2", "methods=luminescence", "from_cal_bp=9000&to_cal_bp=11000&time_mode=median"])(
    "the metadata counted in SQL equals the usage over the items (%s)",
    (query) => {
      const db = getDb();
      const f = filter(query);
      const ids = selectionIds(db, f);
      expect(ids.length).toBeGreaterThan(0);
      const { metadata } = selectConstraints(db, f);
      const fromItems = usageOf(db, [...selectionItems(db, ids)]);
      expect(metadata.count).toBe(ids.length);
      expect(metadata.curves).toEqual(fromItems.curves);
      expect(metadata.citations).toEqual(fromItems.citations);
      expect(metadata.curves.reduce((n, c) => n + c.count, 0)).toBe(ids.length);
    },
  );

  it("a CSV holds one row per selected id, in id order, as many as the count header says", async () => {
    const db = getDb();
    const f = filter("min_grade=1");
    const res = selectionResponse(db, selectConstraints(db, f), "csv");
    const rows = Papa.parse<Record<string, string>>(await res.text(), { header: true, skipEmptyLines: true }).data;
    expect(rows.map((r) => Number(r.id))).toEqual(selectionIds(db, f));
    expect(rows).toHaveLength(Number(res.headers.get("X-Thawline-Count")));
  });

  it("a JSON download with densities is the same, byte for byte, when its densities are already held as text", async () => {
    const db = getDb();
    const f = filter("");
    clearDensityTexts();
    const first = await bytes(selectionResponse(db, selectConstraints(db, f, new Date(0)), "json", { densities: true }));
    expect(densityTextHeld().entries).toBeGreaterThan(100);
    const second = await bytes(selectionResponse(db, selectConstraints(db, f, new Date(0)), "json", { densities: true }));
    expect(Buffer.compare(first, second)).toBe(0);

    // Each density is the stored Float32 blob, value by value, to six significant digits.
    const parsed = JSON.parse(new TextDecoder().decode(second)) as {
      constraints: { id: number; density: { start_cal_bp: number; step: number; p: number[] } | null }[];
    };
    expect(parsed.constraints).toHaveLength(selectionIds(db, f).length);
    const blob = db.$client.prepare(
      "select density_start_cal_bp as start, density from calibrations where determination_id = ? and is_current = 1",
    );
    for (const c of parsed.constraints.filter((_, i) => i % 25 === 0)) {
      const row = blob.get(c.id) as { start: number; density: Buffer };
      const stored = new Float32Array(
        row.density.buffer.slice(row.density.byteOffset, row.density.byteOffset + row.density.byteLength),
      );
      expect(c.density!.start_cal_bp).toBe(row.start);
      expect(c.density!.p).toEqual(Array.from(stored, (v) => Number(v.toPrecision(6))));
    }
  });

  it("the start-up warm-up holds every current density, yields between slices, and downloads stay byte for byte", async () => {
    const db = getDb();
    const f = filter("");
    clearDensityTexts();
    const cold = await bytes(selectionResponse(db, selectConstraints(db, f, new Date(0)), "json", { densities: true }));
    clearDensityTexts();
    let pauses = 0;
    const held = await warmDensityTexts(db, { slice: 50, pause: async () => void pauses++ });
    const current = db.$client
      .prepare("select count(distinct density_sha256) from calibrations where is_current = 1 and density is not null")
      .pluck()
      .get() as number;
    expect(held.entries).toBe(current);
    expect(pauses).toBeGreaterThanOrEqual(Math.floor(current / 50));
    const warm = await bytes(selectionResponse(db, selectConstraints(db, f, new Date(0)), "json", { densities: true }));
    expect(Buffer.compare(cold, warm)).toBe(0);
    // Nothing new was written for the warm download: every density came from the warm-up.
    expect(densityTextHeld().entries).toBe(current);
  });

  it("a release's JSON with densities is the same whether its densities are held or read", async () => {
    const db = getDb();
    const release = releaseById(db, releaseId)!;
    clearDensityTexts();
    const cold = await bytes(releaseResponse(db, release, "json", "http://localhost/releases/x", true));
    const warm = await bytes(releaseResponse(db, release, "json", "http://localhost/releases/x", true));
    expect(Buffer.compare(cold, warm)).toBe(0);
    const items = (JSON.parse(new TextDecoder().decode(warm)) as { constraints: { density: unknown }[] }).constraints;
    expect(items).toHaveLength(release.itemCount);
    expect(items.every((i) => i.density != null)).toBe(true);
  });

  it("the page's live count answers React Router's data request, which adds _routes to the address", async () => {
    const out = await run(() =>
      summaryRoute.loader(
        args(
          get("/constraints/summary.data?min_grade=2&_routes=routes%2Fresources%2Fconstraints-summary", {
            cookie: modellerCookie,
          }),
        ),
      ),
    );
    expect(out.status).toBe(200);
    expect((out.data as { count: number }).count).toBe(selectionIds(getDb(), filter("min_grade=2")).length);
  });
});

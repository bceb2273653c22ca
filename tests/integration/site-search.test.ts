import { describe, expect, it } from "vitest";
import { getDb } from "#app/db/client.server.ts";
import { boxFromText, pointFromText, searchSites, sitesInBox } from "#app/models/registry/site-search.server.ts";
import * as siteSearch from "#app/routes/resources/site-search.ts";
import * as submitPage from "#app/routes/contribute/submit.tsx";
import { createTestSite } from "#tests/factories.ts";
import { args, get, personWithSession, post, run } from "#tests/support/auth.ts";
import { seedForFile } from "#tests/support/test-db.ts";

let cookie: string;

seedForFile(async () => {
  cookie = (await personWithSession(["contributor"])).cookie;
  const db = getDb();
  createTestSite(db, { name: "Quorvath Delta", latitude: 58.1, longitude: -63.2 });
  createTestSite(db, { name: "quorvath Moraine", latitude: 58.12, longitude: -63.25 });
  createTestSite(db, { name: "Lower Quorvath Terrace", latitude: 59.4, longitude: -65.0 });
  createTestSite(db, { name: "Brisk_100% Fen", latitude: 57.0, longitude: -62.0 });
  for (let i = 0; i < 30; i++)
    createTestSite(db, { name: `Sennmark Bog ${String(i).padStart(2, "0")}`, latitude: 56 + i * 0.01, longitude: -61 });
});

describe("site search for the submission form", () => {
  it("finds names starting with the text first (any case), then names with a word starting with it", () => {
    const names = searchSites(getDb(), { q: "quorv" }).map((s) => s.name);
    expect(names.slice(0, 2).sort()).toEqual(["Quorvath Delta", "quorvath Moraine"]);
    expect(names[2]).toBe("Lower Quorvath Terrace");
    expect(names).toHaveLength(3);
  });

  it("caps the answer and takes LIKE's wildcards literally", () => {
    expect(searchSites(getDb(), { q: "Sennmark", limit: 5 })).toHaveLength(5);
    expect(searchSites(getDb(), { q: "Sennmark" })).toHaveLength(20);
    expect(searchSites(getDb(), { q: "Brisk_100%" }).map((s) => s.name)).toEqual(["Brisk_100% Fen"]);
    expect(searchSites(getDb(), { q: "Brisk_1000" })).toHaveLength(0);
    expect(searchSites(getDb(), { q: "%" })).toHaveLength(0);
  });

  it("reads latitude, longitude as a point and answers the nearest sites with their distance", () => {
    expect(pointFromText("58.1, -63.2")).toEqual({ latitude: 58.1, longitude: -63.2 });
    expect(pointFromText("58.1 -63.2")).toEqual({ latitude: 58.1, longitude: -63.2 });
    expect(pointFromText("95, 10")).toBeNull();
    expect(pointFromText("Quorvath")).toBeNull();
    const near = searchSites(getDb(), { q: "58.11, -63.22", limit: 3 });
    expect(near[0]!.name).toMatch(/^[Qq]uorvath (Delta|Moraine)$/);
    expect(near[0]!.distanceKm).toBeLessThan(2);
    for (let i = 1; i < near.length; i++) expect(near[i]!.distanceKm!).toBeGreaterThanOrEqual(near[i - 1]!.distanceKm!);
  });

  it("answers JSON to a contributor through GET /api/site-search", async () => {
    const out = await run(() => siteSearch.loader(args(get("/api/site-search?q=quorvath%20d", { cookie }))));
    expect(out.status).toBe(200);
    const body = out.data as { sites: { name: string; latitude: number }[] };
    expect(body.sites.map((s) => s.name)).toEqual(["Quorvath Delta"]);
    expect(body.sites[0]!.latitude).toBe(58.1);
  });

  it("without script, a typed name that matches one site chooses it on the form", async () => {
    const out = await run(() =>
      submitPage.action(
        args(post("/submit", { site_choice: "existing", site_id: "", site_query: "QUORVATH DELTA" }, { cookie })),
      ),
    );
    // The rest of the form is empty, so it is refused, but not for want of a site.
    const text = JSON.stringify(out.data ?? "");
    expect(text).not.toContain("Choose a site from the list");
    expect(text).toMatch(/lab_code|material|method/);
  });

  it("answers the sites inside a map's view through GET /api/site-search?bbox=, saying when there are more than it sends", async () => {
    const inView = await run(() => siteSearch.loader(args(get("/api/site-search?bbox=58.05,-63.3,58.2,-63.1", { cookie }))));
    expect(inView.status).toBe(200);
    const body = inView.data as { sites: { name: string }[]; more: boolean };
    expect(body.sites.map((s) => s.name).sort()).toEqual(["Quorvath Delta", "quorvath Moraine"]);
    expect(body.more).toBe(false);
    const few = sitesInBox(getDb(), { south: 55.9, west: -61.1, north: 56.4, east: -60.9 }, 10);
    expect(few.sites).toHaveLength(10);
    expect(few.more).toBe(true);
    // Across the antimeridian: west > east.
    expect(boxFromText("50,170,60,-170")).toEqual({ south: 50, west: 170, north: 60, east: -170 });
    const bad = await run(() => siteSearch.loader(args(get("/api/site-search?bbox=60,0,50,10", { cookie }))));
    expect(bad.status).toBe(400);
    expect(JSON.stringify(bad.data)).toContain("bbox: give south,west,north,east");
  });

  it("sends the form the sites' count and box, never the sites themselves", async () => {
    const out = await run(() => submitPage.loader(args(get("/submit", { cookie }))));
    expect(out.status).toBe(200);
    const options = (out.data as { options: Record<string, unknown> }).options;
    expect(options).not.toHaveProperty("sites");
    const area = options.siteArea as { count: number; south: number; north: number; west: number; east: number };
    expect(area.count).toBe(34);
    expect(area).toMatchObject({ south: 56, north: 59.4, west: -65, east: -61 });
    expect(JSON.stringify(out.data)).not.toContain("Sennmark Bog");
  });
});

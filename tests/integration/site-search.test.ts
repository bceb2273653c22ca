import { describe, expect, it } from "vitest";
import { getDb } from "#app/db/client.server.ts";
import { pointFromText, searchSites } from "#app/models/registry/site-search.server.ts";
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
});

import fs from "node:fs";
import Papa from "papaparse";
import type { Page } from "playwright-core";
import { describe, expect, inject, test } from "vitest";
import { CSV_COLUMNS } from "#app/models/releases/downloads.server.ts";
import { useBrowserAndDatabase } from "./browser.ts";
import { signInAs, waitForHydration } from "./helpers.ts";

/*
 * The constraint-set journey. A modeller narrows the registry to a region, a time window and a
 * minimum grade on /constraints, watches the count and the summed density follow, downloads the
 * CSV (its header and row count must match the count shown) and saves the set; an editor opens
 * the saved set's address and publishes it as a release; a signed-out visitor opens the release
 * page and downloads it.
 */

const baseUrl = inject("baseUrl");
const e2e = useBrowserAndDatabase();

const countOf = async (page: Page) => Number(await page.getByTestId("constraint-count").getAttribute("data-count"));
const plotLabel = (page: Page) => page.getByTestId("summed-density").locator("svg").getAttribute("aria-label");

async function downloadText(page: Page, click: () => Promise<void>): Promise<string> {
  const [download] = await Promise.all([page.waitForEvent("download"), click()]);
  return fs.readFileSync((await download.path())!, "utf8");
}

describe("constraint sets and releases", () => {
  test("a modeller selects and downloads; an editor publishes the saved set; a visitor downloads the release", async () => {
    const db = e2e.db;
    const extent = db.prepare("select min(longitude) w, max(longitude) e, min(latitude) s, max(latitude) n from sites").get() as {
      w: number;
      e: number;
      s: number;
      n: number;
    };
    // The western half of the demo's sites, to two decimals (as a person would type it).
    const bbox = [extent.w - 0.01, extent.s - 0.01, (extent.w + extent.e) / 2, extent.n + 0.01].map((v) => v.toFixed(2));

    // ------------------------------------------------------------------ the modeller
    const modeller = await e2e.browser.newContext({ acceptDownloads: true });
    const page = await modeller.newPage();
    await signInAs(page, "modeller@example.org");
    await page.goto(`${baseUrl}/constraints`);
    await waitForHydration(page);
    const all = await countOf(page);
    expect(all).toBeGreaterThan(100);
    const plotAll = await plotLabel(page);

    // Independent SQL for each step: inside the box; the overlap rule (the 95.4 % range, whose
    // oldest end is hpd95_from_bp, meets 8,000–12,000 cal BP); grade 2 or better.
    const [w, s, e, n] = bbox.map(Number) as [number, number, number, number];
    const sqlCount = (window: boolean, grade: boolean) =>
      (
        db
          .prepare(
            `select count(*) n from determinations d join samples sa on sa.id = d.sample_id join sites t on t.id = sa.site_id
             join calibrations c on c.determination_id = d.id and c.is_current = 1
             where d.status <> 'withdrawn' and c.median_cal_bp is not null
               and t.longitude between ? and ? and t.latitude between ? and ?
               ${window ? "and c.hpd95_from_bp >= 8000 and c.hpd95_to_bp <= 12000" : ""}
               ${grade ? "and d.grade >= 2" : ""}`,
          )
          .get(w, e, s, n) as { n: number }
      ).n;
    const [inBox, inWindow, selected] = [sqlCount(false, false), sqlCount(true, false), sqlCount(true, true)];
    expect(all).toBeGreaterThan(inBox);
    expect(inBox).toBeGreaterThan(inWindow);
    expect(inWindow).toBeGreaterThan(selected);
    expect(selected).toBeGreaterThan(0);

    // Each change refreshes the count without a reload (the page's fetcher), up to the SQL's count.
    await page.getByLabel("Bounding box W,S,E,N (degrees)").fill(bbox.join(","));
    await expect.poll(() => countOf(page), { timeout: 15_000 }).toBe(inBox);
    await page.getByLabel("From", { exact: true }).fill("8000");
    await page.getByLabel("To", { exact: true }).fill("12000");
    await expect.poll(() => countOf(page), { timeout: 15_000 }).toBe(inWindow);
    await page.getByLabel("Minimum grade").selectOption("2");
    await expect.poll(() => countOf(page), { timeout: 15_000 }).toBe(selected);

    // The count shown, the summed density and the address all follow the filter.
    await expect
      .poll(() => page.getByTestId("constraint-count").textContent())
      .toBe(`${selected.toLocaleString("en")} determination${selected === 1 ? "" : "s"} selected`);
    const plotNow = await plotLabel(page);
    expect(plotNow).not.toBe(plotAll);
    expect(plotNow).toContain(selected.toLocaleString("en"));
    const url = new URL(page.url());
    expect(url.searchParams.get("bbox")!.split(",").map(Number)).toEqual(bbox.map(Number));
    expect(url.searchParams.get("min_grade")).toBe("2");

    // The CSV: the column header, then one row per determination shown.
    const csv = await downloadText(page, () => page.getByTestId("download-csv").click());
    const parsed = Papa.parse<Record<string, string>>(csv, { header: true, skipEmptyLines: true });
    expect(parsed.meta.fields).toEqual(CSV_COLUMNS.map(([name]) => name));
    expect(parsed.data).toHaveLength(selected);
    expect(parsed.data.every((r) => Number(r.grade) >= 2)).toBe(true);
    expect(parsed.data.every((r) => Number(r.longitude) >= w && Number(r.longitude) <= e)).toBe(true);

    // Saved under a name; the saved set's link holds the filter.
    const setName = `Western half ${Date.now() % 100000}`;
    await page.getByLabel("Save this filter as").fill(setName);
    await Promise.all([page.waitForURL(/\/constraints\?/), page.getByRole("button", { name: "Save set" }).click()]);
    const saved = page.getByRole("link", { name: setName });
    await saved.waitFor();
    const setHref = await saved.getAttribute("href");
    expect(setHref).toContain("min_grade=2");
    await modeller.close();

    // ------------------------------------------------------------------ the editor
    const editor = await e2e.browser.newContext();
    const editorPage = await editor.newPage();
    await signInAs(editorPage, "editor@example.org");
    await editorPage.goto(`${baseUrl}${setHref}`);
    await waitForHydration(editorPage);
    expect(await countOf(editorPage)).toBe(selected);
    const releaseName = `Journey release ${Date.now() % 100000}`;
    const form = editorPage.getByTestId("publish-form");
    await form.getByLabel("Name", { exact: true }).fill(releaseName);
    await form.getByLabel("Description").fill("The western half, 8,000–12,000 cal BP, grade 2 or better.");
    await Promise.all([
      editorPage.waitForURL(/\/releases\/journey-release-/),
      form.getByRole("button", { name: "Publish release" }).click(),
    ]);
    const releasePath = new URL(editorPage.url()).pathname;
    await editorPage.getByTestId("release-name").waitFor();
    const stored = db.prepare("select item_count n, checksum, filter from releases where name = ?").get(releaseName) as {
      n: number;
      checksum: string;
      filter: string;
    };
    expect(stored.n).toBe(selected);
    expect(JSON.parse(stored.filter)).toMatchObject({ min_grade: "2", from_cal_bp: "8000", to_cal_bp: "12000" });
    await editor.close();

    // ------------------------------------------------------------------ a signed-out visitor
    const visitor = await e2e.browser.newContext({ acceptDownloads: true });
    const visitorPage = await visitor.newPage();
    await visitorPage.goto(`${baseUrl}${releasePath}`);
    await expect.poll(() => visitorPage.getByTestId("release-name").textContent()).toContain(releaseName);
    await visitorPage
      .getByText(`${selected.toLocaleString("en")} constraints`)
      .first()
      .waitFor();
    expect(await visitorPage.getByTestId("release-checksum").textContent()).toBe(stored.checksum);
    const releaseCsv = await downloadText(visitorPage, () => visitorPage.getByTestId("release-csv").click());
    const releaseRows = Papa.parse<Record<string, string>>(releaseCsv, { header: true, skipEmptyLines: true }).data;
    expect(releaseRows.map((r) => r.id)).toEqual(parsed.data.map((r) => r.id));
    await visitor.close();
  });

  test("a modeller draws a region on the map by clicking its corners; the count is the sites inside it", async () => {
    const db = e2e.db;
    const context = await e2e.browser.newContext();
    const page = await context.newPage();
    await signInAs(page, "modeller@example.org");
    await page.goto(`${baseUrl}/constraints`);
    await waitForHydration(page);
    const all = await countOf(page);
    const map = page.locator(".leaflet-container");
    await map.waitFor();
    const box = (await map.boundingBox())!;
    // The answer for the first three corners is held back until after the fourth corner's answer:
    // the page must show the four-corner count, never the older answer arriving last.
    let held = 0;
    await page.route("**/constraints/summary**", async (route) => {
      const polygon = new URL(route.request().url()).searchParams.get("polygon") ?? "";
      if (polygon.split(";").length === 3) {
        held++;
        await new Promise((r) => setTimeout(r, 2_000));
      }
      await route.continue().catch(() => undefined); // the page may have cancelled it meanwhile
    });
    // Four corners around the middle of the map, clockwise on screen.
    const corners = [
      [0.3, 0.3],
      [0.7, 0.3],
      [0.7, 0.7],
      [0.3, 0.7],
    ] as const;
    for (const [fx, fy] of corners) await page.mouse.click(box.x + fx * box.width, box.y + fy * box.height);
    await page.getByText("Polygon: 4 points.").waitFor();
    const ring = (await page.locator('input[name="polygon"]').inputValue())
      .split(";")
      .map((p) => p.split(",").map(Number) as [number, number]);
    expect(ring).toHaveLength(4);

    // Independent count: every counted determination whose site lies inside the ring (ray casting).
    const inside = ([x, y]: [number, number]) => {
      let hit = false;
      for (let i = 0, j = ring.length - 1; i < ring.length; j = i++) {
        const [xi, yi] = ring[i]!;
        const [xj, yj] = ring[j]!;
        if (yi > y !== yj > y && x < ((xj - xi) * (y - yi)) / (yj - yi) + xi) hit = !hit;
      }
      return hit;
    };
    const rows = db
      .prepare(
        `select t.longitude lon, t.latitude lat from determinations d join samples sa on sa.id = d.sample_id
         join sites t on t.id = sa.site_id join calibrations c on c.determination_id = d.id and c.is_current = 1
         where d.status <> 'withdrawn' and c.median_cal_bp is not null`,
      )
      .all() as { lon: number; lat: number }[];
    expect(rows.length).toBe(all);
    const expected = rows.filter((r) => inside([r.lon, r.lat])).length;
    expect(expected).toBeGreaterThan(0);
    expect(expected).toBeLessThan(all);
    await expect.poll(() => countOf(page), { timeout: 15_000 }).toBe(expected);
    expect(new URL(page.url()).searchParams.get("polygon")).toBeTruthy();
    if (held > 0) {
      await new Promise((r) => setTimeout(r, 2_500)); // past the held answer
      expect(await countOf(page)).toBe(expected);
    }

    // Clearing the region gives the whole registry back.
    await page.getByRole("button", { name: "Clear region" }).click();
    await expect.poll(() => countOf(page), { timeout: 15_000 }).toBe(all);
    await context.close();
  });
});

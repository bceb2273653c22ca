import Database from "better-sqlite3";
import { afterAll, beforeAll, expect, inject, test } from "vitest";
import type { Locator, Page } from "playwright-core";
import { useBrowser } from "./browser.ts";
import { signInAs } from "./helpers.ts";

/*
 * Hardening corpus, case 1: a site name with markup is shown as text in every map label. Every
 * site is renamed to a hostile name for this file (and restored after), so whichever marker the
 * mouse finds carries it.
 */

const baseUrl = inject("baseUrl");
const e2e = useBrowser();
const HOSTILE = `<img src=x onerror="window.__labelScript = 1">Cove <b>bold</b>`;
let saved: { id: number; name: string }[] = [];

beforeAll(() => {
  const db = new Database(inject("databaseFile"));
  saved = db.prepare("select id, name from sites").all() as typeof saved;
  db.prepare("update sites set name = ? || ' ' || id").run(HOSTILE);
  db.close();
});
afterAll(() => {
  const db = new Database(inject("databaseFile"));
  const restore = db.prepare("update sites set name = ? where id = ?");
  db.transaction(() => saved.forEach((s) => restore.run(s.name, s.id)))();
  db.close();
});

/** Moves the mouse over the map, from its centre outwards, until a tooltip opens. */
async function hoverUntilTooltip(page: Page, map: Locator): Promise<Locator> {
  const box = (await map.boundingBox())!;
  const tooltip = page.locator(".leaflet-tooltip");
  const cx = box.x + box.width / 2;
  const cy = box.y + box.height / 2;
  for (let r = 0; r < Math.min(box.width, box.height) / 2; r += 6) {
    for (let a = 0; a < 360; a += r === 0 ? 360 : Math.max(4, 360 / ((2 * Math.PI * r) / 5))) {
      await page.mouse.move(cx + r * Math.cos((a * Math.PI) / 180), cy + r * Math.sin((a * Math.PI) / 180));
      if ((await tooltip.count()) > 0) return tooltip.first();
    }
  }
  throw new Error("No marker found under the mouse");
}

async function expectTextOnly(page: Page, tooltip: Locator) {
  expect(await tooltip.textContent()).toContain(`<img src=x onerror="window.__labelScript = 1">Cove <b>bold</b>`);
  expect(await tooltip.locator("img, b").count()).toBe(0);
  expect(await page.evaluate(() => (window as unknown as { __labelScript?: number }).__labelScript)).toBeUndefined();
}

test("the map's hover label shows a hostile site name as text", async () => {
  const page = await e2e.browser.newPage({ viewport: { width: 1280, height: 900 } });
  await signInAs(page, "modeller@example.org");
  await page.goto(`${baseUrl}/map`);
  await page.getByTestId("map-ready").waitFor({ state: "attached", timeout: 30_000 });
  const tooltip = await hoverUntilTooltip(page, page.locator(".leaflet-container").first());
  await expectTextOnly(page, tooltip);
  await page.close();
});

test("the site picker's hover label shows a hostile site name as text", async () => {
  const page = await e2e.browser.newPage({ viewport: { width: 1280, height: 900 } });
  await signInAs(page, "contributor@example.org");
  await page.goto(`${baseUrl}/submit`);
  await page.getByLabel("A new site").check();
  const map = page.getByRole("application", { name: "Map for placing the new site" });
  await map.waitFor();
  const tooltip = await hoverUntilTooltip(page, map);
  await expectTextOnly(page, tooltip);
  await page.close();
});

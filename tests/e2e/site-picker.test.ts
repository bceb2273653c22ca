import { expect, inject, test } from "vitest";
import type { Locator } from "playwright-core";
import { useBrowser } from "./browser.ts";
import { signInAs, waitForHydration } from "./helpers.ts";

const e2e = useBrowser();

/** The demo registry's region (fictional sites around a former ice margin). */
const inDemoRegion = (lat: number, lon: number) => lat > 55 && lat < 62 && lon > -75 && lon < -58;
const FIVE_DECIMALS = /^-?\d+(\.\d{1,5})?$/;

async function centreOf(locator: Locator): Promise<{ x: number; y: number }> {
  const box = await locator.boundingBox();
  if (!box) throw new Error("The element has no box on the page");
  return { x: box.x + box.width / 2, y: box.y + box.height / 2 };
}

test("a contributor places a new site on the map; typed coordinates move the marker; Enter places it from the keyboard", async () => {
  const page = await e2e.browser.newPage({ viewport: { width: 1280, height: 900 } });
  await signInAs(page, "contributor@example.org");
  await page.goto(`${inject("baseUrl")}/submit`);
  await waitForHydration(page);
  await page.getByLabel("A new site").check();

  const map = page.getByRole("application", { name: "Map for placing the new site" });
  await map.waitFor();
  const latitude = page.locator('input[name="latitude"]');
  const longitude = page.locator('input[name="longitude"]');
  expect(await latitude.inputValue()).toBe("");

  // The picker opens fitted to the registry's sites, so its centre lies in the demo region.
  const centre = await centreOf(map);
  await page.mouse.click(centre.x + 15, centre.y - 10);
  await expect.poll(() => latitude.inputValue()).not.toBe("");
  const lat = await latitude.inputValue();
  const lon = await longitude.inputValue();
  expect(lat).toMatch(FIVE_DECIMALS);
  expect(lon).toMatch(FIVE_DECIMALS);
  expect(inDemoRegion(Number(lat), Number(lon))).toBe(true);

  // The marker sits where the click was.
  const marker = page.locator("path.site-picker-chosen");
  const placed = await centreOf(marker);
  expect(Math.abs(placed.x - (centre.x + 15))).toBeLessThan(3);
  expect(Math.abs(placed.y - (centre.y - 10))).toBeLessThan(3);

  // Typing a latitude further north moves the marker up the map.
  await latitude.fill(String(Number(lat) + 0.3));
  await expect.poll(async () => (await centreOf(marker)).y).toBeLessThan(placed.y - 5);

  // From the keyboard: pan east with an arrow key, then Enter places the site at the map's centre.
  await map.focus();
  await map.press("ArrowRight");
  await expect
    .poll(async () => {
      await map.press("Enter");
      return Number(await longitude.inputValue());
    })
    .toBeGreaterThan(Number(lon));
  expect(inDemoRegion(Number(await latitude.inputValue()), Number(await longitude.inputValue()))).toBe(true);
  await page.close();
});

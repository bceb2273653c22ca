import fs from "node:fs";
import { expect, inject, test } from "vitest";
import { useBrowser } from "./browser.ts";
import { waitForHydration } from "./helpers.ts";

const e2e = useBrowser();

test("calibrate one age as you type, see the plot, download the CSV", async () => {
  const page = await e2e.browser.newPage({ acceptDownloads: true });
  await page.goto(`${inject("baseUrl")}/calibrate`);
  // Typing only calibrates once the page is interactive.
  await waitForHydration(page);
  await page.fill("#age", "10250");
  await page.fill("#error", "45");

  const median = await page.waitForSelector('[data-testid="median"]');
  const medianText = (await median.textContent()) ?? "";
  const value = Number(medianText.replace(/[^\d]/g, ""));
  expect(value).toBeGreaterThan(11800);
  expect(value).toBeLessThan(12100);

  const svg = await page.waitForSelector('svg[role="img"][aria-label^="Calibration of"]');
  expect(await svg.getAttribute("aria-label")).toMatch(/10,250 ± 45 ¹⁴C yr BP on IntCal20/);
  expect(await page.textContent("figcaption")).toMatch(/68\.3 %/);

  const [download] = await Promise.all([page.waitForEvent("download"), page.click('[data-testid="download-csv"]')]);
  expect(download.suggestedFilename()).toBe("thawline-calibration.csv");
  const csv = fs.readFileSync((await download.path())!, "utf8");
  const header = csv.split("\r\n").find((l) => l.startsWith("id,"))!;
  expect(header.split(",")).toContain("median_cal_bp");
  const row = csv.split("\r\n").find((l) => l.startsWith("1,10250,45,intcal20"))!;
  expect(row).toContain(`,${value},`);
  await page.close();
});

test("a pasted list shows each result and a message for a bad line", async () => {
  const page = await e2e.browser.newPage();
  await page.goto(`${inject("baseUrl")}/calibrate`);
  await waitForHydration(page);
  await page.check("#mode-list");
  await page.fill("#list", "a1, 10250, 45\nm1, 9500, 70, marine20, 50, 40\nbad, x, 3");
  await page.waitForFunction(() => document.querySelectorAll('[data-testid="median"]').length === 2);
  expect(await page.textContent('[data-testid="results-table"]')).toContain('Line 3: the age "x" is not a number.');
  await page.close();
});

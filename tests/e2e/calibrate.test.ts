import fs from "node:fs";
import type { Page } from "playwright-core";
import { expect, inject, test } from "vitest";
import { useBrowser } from "./browser.ts";
import { waitForHydration } from "./helpers.ts";

const e2e = useBrowser();

async function sheetMode(page: Page) {
  await page.click("label:has(#mode-sheet)");
  await page.locator("#sheet").waitFor({ state: "visible" });
}

/** The rows of the results table: row number → its text. */
async function tableRows(page: Page): Promise<Record<string, string>> {
  return page.$$eval("[data-testid=results-table] tbody tr", (trs) =>
    Object.fromEntries(trs.map((tr) => [tr.getAttribute("data-row") ?? "", (tr as HTMLElement).innerText])),
  );
}

test("one age calibrates as it is typed: summary and legend agree, the plot is drawn, the CSV downloads", async () => {
  const page = await e2e.browser.newPage({ acceptDownloads: true });
  await page.goto(`${inject("baseUrl")}/calibrate`);
  await waitForHydration(page);
  expect(await page.textContent("main")).toContain("Type an age and its error above");
  await page.fill("#age", "10250");
  await page.fill("#error", "45");

  const svg = await page.waitForSelector('svg[role="img"][aria-label^="Calibration of"]');
  expect(await svg.getAttribute("aria-label")).toMatch(/10,250 ± 45 ¹⁴C yr BP on IntCal20/);
  const median = Number(((await page.textContent('[data-testid="median"]')) ?? "").replace(/[^\d]/g, ""));
  expect(median).toBeGreaterThan(11800);
  expect(median).toBeLessThan(12100);
  // The table's ranges read exactly as the legend's.
  const legend = (await page.textContent("figcaption")) ?? "";
  for (const cell of ["hpd68", "hpd95"]) {
    const items = await page.$$eval(`[data-testid=${cell}] li`, (lis) => lis.map((li) => li.textContent!.trim()));
    expect(items.length).toBeGreaterThan(0);
    for (const item of items) expect(legend).toContain(item);
  }
  // Older on the left, said on the axis.
  expect(await page.locator('[data-testid="calibration-plot"] [data-time-direction="older-left"]').count()).toBe(1);

  const [download] = await Promise.all([page.waitForEvent("download"), page.click('[data-testid="download-csv"]')]);
  expect(download.suggestedFilename()).toBe("thawline-calibration.csv");
  const csv = fs.readFileSync((await download.path())!, "utf8");
  const lines = csv.split("\r\n");
  const header = lines.find((l) => l.startsWith("row,"))!.split(",");
  expect(header).toContain("median_cal_bp");
  const row = lines.find((l) => l.startsWith("1,Your age,10250,45,intcal20"))!.split(",");
  expect(Number(row[header.indexOf("median_cal_bp")])).toBe(median);
  await page.close();
});

test("a pasted sheet shows each row with its sparkline, and the bad line's message at its cell", async () => {
  const page = await e2e.browser.newPage();
  await page.goto(`${inject("baseUrl")}/calibrate`);
  await waitForHydration(page);
  await sheetMode(page);
  await page.fill(
    "#sheet",
    [
      "lab_code\tc14_age\tc14_error\tcurve\tdelta_r\tdelta_r_error",
      "XMPL-1\t10250\t45",
      "XMPL-2\t9500\t70\tmarine20\t50\t40",
      "XMPL-3\tx\t3",
    ].join("\n"),
  );
  await page.waitForFunction(() => document.querySelectorAll('[data-testid="median"]').length === 2);
  const rows = await tableRows(page);
  expect(rows["4"]).toContain('"x" is not a number; c14_age takes a number in ¹⁴C yr BP.');
  expect(rows["3"]).toMatch(/Marine20 \(2020\), ΔR 50 ± 40/);
  expect(await page.locator('[data-testid="sparkline"]').count()).toBe(2);
  expect(await page.textContent('[data-testid="problem-summary"]')).toMatch(/1 of 3 rows cannot be calibrated/);
  // The first row is plotted; the second row's Plot button draws its own.
  await page.waitForSelector('svg[aria-label*="XMPL-1"]');
  await page.click('button[aria-label="Plot XMPL-2"]');
  const plot = await page.waitForSelector('svg[aria-label*="XMPL-2"]');
  expect(await plot.getAttribute("aria-label")).toMatch(/on Marine20 \(2020\), ΔR 50 ± 40/);
  await page.close();
});

test("a CSV file dropped on the page is read into the sheet and calibrated", async () => {
  const page = await e2e.browser.newPage();
  await page.goto(`${inject("baseUrl")}/calibrate`);
  await waitForHydration(page);
  await sheetMode(page);
  const csv = "site_name,lab_code,c14_age,c14_error\r\nExample Cove,XMPL-11,8120,35\r\nExample Cove,XMPL-12,9020,40\r\n";
  await page.evaluate((text) => {
    const transfer = new DataTransfer();
    transfer.items.add(new File([text], "ages.csv", { type: "text/csv" }));
    const zone = document.querySelector('[data-testid="drop-zone"]')!;
    zone.dispatchEvent(new DragEvent("drop", { dataTransfer: transfer, bubbles: true, cancelable: true }));
  }, csv);
  await page.waitForFunction(() => document.querySelectorAll('[data-testid="median"]').length === 2);
  expect(await page.textContent('[data-testid="file-note"]')).toMatch(/Read ages\.csv: 2 rows/);
  expect(await page.inputValue("#sheet")).toMatch(/^site_name\tlab_code\tc14_age\tc14_error\n/);
  const rows = await tableRows(page);
  expect(rows["2"]).toContain("XMPL-11");
  expect(rows["3"]).toContain("XMPL-12");
  expect(await page.textContent("main")).toMatch(/Set aside \(not needed to calibrate\): 1 template column, site_name/);
  await page.close();
});

test("without script the form posts and the page answers with the results", async () => {
  const context = await e2e.browser.newContext({ javaScriptEnabled: false });
  const page = await context.newPage();
  await page.goto(`${inject("baseUrl")}/calibrate`);
  await page.check("#mode-sheet", { force: true });
  await page.fill("#sheet", "XMPL-1, 10250, 45\nXMPL-2, 8120, 35\nXMPL-3, 10250, nope");
  await Promise.all([page.waitForNavigation(), page.click('button[type="submit"]:has-text("Calibrate")')]);
  expect(await page.locator('[data-testid="median"]').count()).toBe(2);
  expect((await tableRows(page))["3"]).toContain('"nope" is not a number');
  expect(await page.locator('[data-testid="calibration-plot"]').count()).toBe(1);
  await context.close();
});

test("the keyboard alone switches between one age and a sheet, and Enter calibrates without leaving the page", async () => {
  const page = await e2e.browser.newPage();
  await page.goto(`${inject("baseUrl")}/calibrate`);
  await waitForHydration(page);
  await page.focus("#mode-one");
  await page.keyboard.press("ArrowRight");
  expect(await page.isChecked("#mode-sheet")).toBe(true);
  await page.locator("#sheet").waitFor({ state: "visible" });
  await page.keyboard.press("ArrowLeft");
  expect(await page.isChecked("#mode-one")).toBe(true);
  await page.keyboard.press("Tab");
  expect(await page.evaluate(() => document.activeElement?.id)).toBe("age");
  await page.keyboard.type("8120");
  await page.keyboard.press("Tab");
  await page.keyboard.type("35");
  await page.keyboard.press("Enter");
  await page.waitForSelector('[data-testid="median"]');
  expect(new URL(page.url()).pathname).toBe("/calibrate");
  await page.close();
});

import { describe, expect, inject, test } from "vitest";
import type { Page } from "playwright-core";
import { useBrowserAndDatabase } from "./browser.ts";
import { signInAs, waitForHydration } from "./helpers.ts";

/*
 * The modeller's first look round: Explore with a filter, a sort and a second page, one
 * determination, then the map with its markers and the time slider. Runs against the built app
 * seeded small (tests/e2e/global-setup.ts).
 */

const baseUrl = inject("baseUrl");
const e2e = useBrowserAndDatabase();

/** Every request the page makes must stay on the app's own address (the map is offline). */
function recordForeignRequests(page: Page): string[] {
  const foreign: string[] = [];
  page.on("request", (r) => {
    const url = r.url();
    if (!url.startsWith(baseUrl) && !url.startsWith("data:") && !url.startsWith("blob:")) foreign.push(url);
  });
  return foreign;
}

const numberIn = (text: string | null) => Number((text ?? "").replace(/[^\d]/g, ""));
/** The first number in a sentence ("236 determinations match…; showing 1–50"). */
const firstNumber = (text: string | null) => Number((/[\d,]+/.exec(text ?? "")?.[0] ?? "").replace(/,/g, ""));

describe("exploring the registry", () => {
  test("filter, sort, page, open a determination, then the map", async () => {
    const context = await e2e.browser.newContext();
    const page = await context.newPage();
    const foreign = recordForeignRequests(page);
    await signInAs(page, "modeller@example.org");

    await page.goto(`${baseUrl}/explore`);
    await page.getByRole("heading", { name: "Explore determinations" }).waitFor();
    await waitForHydration(page);
    const table = page.getByTestId("explore-table");
    await table.waitFor();
    const allTotal = firstNumber(await page.getByTestId("explore-total").textContent());
    expect(allTotal).toBeGreaterThan(50);

    // Changing a select submits the filter form by itself.
    await Promise.all([
      page.waitForURL((url) => url.searchParams.get("method") === "radiocarbon"),
      page.getByLabel("Method").selectOption("radiocarbon"),
    ]);
    await page.getByTestId("explore-total").filter({ hasText: "match these filters" }).waitFor();
    const radiocarbonTotal = firstNumber(await page.getByTestId("explore-total").textContent());
    const expected = e2e.db
      .prepare("select count(*) as n from determinations where method = 'radiocarbon' and status != 'withdrawn'")
      .get() as { n: number };
    expect(radiocarbonTotal).toBe(expected.n);
    const methods = await table.locator("tbody tr td:nth-child(4)").allTextContents();
    expect(new Set(methods)).toEqual(new Set(["radiocarbon"]));

    // Sort by calibrated median, oldest first.
    await Promise.all([
      page.waitForURL((url) => url.searchParams.get("sort") === "cal"),
      table.getByRole("link", { name: /^Median \(cal BP\)/ }).click(),
    ]);
    await table.locator('th[aria-sort="descending"]').filter({ hasText: "Median" }).waitFor();
    const medians = (await table.locator("tbody tr td:nth-child(6)").allTextContents())
      .filter((t) => t.trim() !== "")
      .map(numberIn);
    expect(medians.length).toBeGreaterThan(10);
    expect(medians).toEqual([...medians].sort((a, b) => b - a));

    // Second page: the filter and the sort carry over.
    await Promise.all([
      page.waitForURL((url) => url.searchParams.get("page") === "2"),
      page.getByRole("navigation", { name: "Pages" }).getByRole("link", { name: "Next →" }).click(),
    ]);
    await page.getByRole("navigation", { name: "Pages" }).locator('[aria-current="page"]', { hasText: "2" }).waitFor();
    const url = new URL(page.url());
    expect(url.searchParams.get("method")).toBe("radiocarbon");
    expect(url.searchParams.get("sort")).toBe("cal");
    const secondPageFirst = numberIn(await table.locator("tbody tr td:nth-child(6)").first().textContent());
    expect(secondPageFirst).toBeLessThanOrEqual(medians[medians.length - 1]!);

    // Open the first determination on the page.
    const firstLink = table.locator("tbody tr td:first-child a").first();
    const labCode = (await firstLink.textContent())!.trim();
    await Promise.all([page.waitForURL(/\/determinations\/\d+$/), firstLink.click()]);
    await page.getByRole("heading", { level: 1, name: labCode }).waitFor();
    expect(await page.getByTestId("measured-age").textContent()).toMatch(/¹⁴C yr BP$/);
    await page.getByRole("heading", { name: "Related determinations" }).waitFor();

    // The map: wait for the markers, one per dated site.
    await page.getByRole("navigation", { name: "Main" }).getByRole("link", { name: "Map" }).click();
    const ready = page.getByTestId("map-ready");
    await ready.waitFor({ state: "attached", timeout: 30_000 });
    const drawn = Number(await ready.getAttribute("data-count"));
    const sites = e2e.db
      .prepare(
        `select count(distinct s.site_id) as n from determinations d join samples s on s.id = d.sample_id
         where d.status != 'withdrawn'`,
      )
      .get() as { n: number };
    expect(drawn).toBe(sites.n);
    expect(await page.locator(".leaflet-container canvas").count()).toBeGreaterThan(0);

    // Back in time to the oldest end of the slider: fewer sites are free of ice than today.
    const slider = page.getByTestId("time-slider");
    const iceFree = async () => firstNumber(await page.getByText(/sites dated ice-free by/).textContent());
    const today = await iceFree();
    await slider.focus();
    await page.keyboard.press("Home");
    await page.getByRole("button", { name: "Back to the present" }).waitFor();
    expect(await iceFree()).toBeLessThan(today);

    expect(foreign).toEqual([]);
    await context.close();
  });

  test("the filter form works without JavaScript", async () => {
    // Sign in, then carry the session into a context with scripts off.
    const signedIn = await e2e.browser.newContext();
    await signInAs(signedIn, "modeller@example.org");
    const cookies = await signedIn.cookies(baseUrl);
    await signedIn.close();
    const noScript = await e2e.browser.newContext({ javaScriptEnabled: false });
    await noScript.addCookies(cookies);
    const plain = await noScript.newPage();
    await plain.goto(`${baseUrl}/explore`);
    await plain.getByLabel("Grade").selectOption("ungraded");
    await Promise.all([
      plain.waitForURL((u) => u.searchParams.get("grade") === "ungraded"),
      plain.getByRole("button", { name: "Apply filters" }).click(),
    ]);
    const grades = await plain.getByTestId("explore-table").locator("tbody tr td:nth-child(9)").allTextContents();
    expect(grades.length).toBeGreaterThan(0);
    expect(new Set(grades)).toEqual(new Set(["ungraded"]));
    await noScript.close();
  });
});

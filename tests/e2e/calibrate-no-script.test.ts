// The calibration page without script: the form posts to /calibrate as a plain document request
// and the answer is the page with the results in it (the no-script path of the page's action).
// Written against behaviour only — the form's own fields and button, the status, the results text.
import { expect, inject, test } from "vitest";
import { useBrowser } from "./browser.ts";

const e2e = useBrowser();

/** Numbers written with a thousands separator in a text ("11,950" → 11950). */
const grouped = (text: string) => [...text.matchAll(/\b\d{1,2},\d{3}\b/g)].map((m) => Number(m[0].replace(",", "")));

test("a plain form POST to /calibrate answers 200 with the calibrated result in the page", async () => {
  const context = await e2e.browser.newContext({ javaScriptEnabled: false });
  const page = await context.newPage();
  await page.goto(`${inject("baseUrl")}/calibrate`);
  await page.fill('input[name="age"]', "10250");
  await page.fill('input[name="error"]', "45");
  const [answer] = await Promise.all([
    page.waitForResponse((r) => r.request().method() === "POST" && new URL(r.url()).pathname === "/calibrate"),
    page.click('main form button[type="submit"]:not([formaction])'),
  ]);
  expect(answer.status()).toBe(200);
  expect(answer.headers()["content-type"]).toMatch(/^text\/html/);
  await page.waitForLoadState("load");
  const text = (await page.textContent("main")) ?? "";
  expect(text).toContain("cal BP");
  // 10,250 ± 45 ¹⁴C yr BP on IntCal20: the median lies near 11,950 cal BP (the bounds the scripted test uses).
  expect(grouped(text).some((n) => n > 11800 && n < 12100)).toBe(true);
  // What was typed is still in the form, so it can be changed and sent again.
  expect(await page.inputValue('input[name="age"]')).toBe("10250");
  await context.close();
});

test("a plain form POST with an age that is not a number answers with the problem in the page, not an error page", async () => {
  const context = await e2e.browser.newContext({ javaScriptEnabled: false });
  const page = await context.newPage();
  await page.goto(`${inject("baseUrl")}/calibrate`);
  await page.fill('input[name="age"]', "twelve");
  await page.fill('input[name="error"]', "45");
  const [answer] = await Promise.all([
    page.waitForResponse((r) => r.request().method() === "POST" && new URL(r.url()).pathname === "/calibrate"),
    page.click('main form button[type="submit"]:not([formaction])'),
  ]);
  expect(answer.status()).toBeLessThan(500);
  await page.waitForLoadState("load");
  expect(await page.locator('[role="alert"] h1').count()).toBe(0);
  expect((await page.textContent("main")) ?? "").toMatch(/\bnot a number|must be a number/i);
  await context.close();
});

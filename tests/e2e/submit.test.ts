import { expect, inject, test } from "vitest";
import { useBrowser } from "./browser.ts";
import { signInAs, waitForHydration } from "./helpers.ts";

const e2e = useBrowser();

test("a contributor submits a radiocarbon date by form, sees it calibrate live, finds it in My submissions and withdraws it", async () => {
  const page = await e2e.browser.newPage();
  const base = inject("baseUrl");
  const labCode = `FORM-${Date.now() % 1_000_000}`;
  await signInAs(page, "contributor@example.org");

  await page.goto(`${base}/submit`);
  // Typing only previews once the page is interactive.
  await waitForHydration(page);
  await page.getByLabel("A new site").check();
  await page.fill('input[name="site_name"]', "Browser Test Knoll");
  await page.fill('input[name="latitude"]', "58.6012");
  await page.fill('input[name="longitude"]', "-64.1207");
  await page.fill('input[name="sample_code"]', "BTK-1");
  await page.selectOption('select[name="material"]', "plant macrofossil");
  await page.check('input[name="constraint_kind"][value="minimum"]');
  await page.selectOption('select[name="lab_name"]', { index: 1 });
  await page.fill('input[name="lab_code"]', labCode);

  // A missing error is reported at its field when the contributor leaves it.
  await page.fill('input[name="c14_age"]', "10250");
  await page.focus('input[name="c14_error"]');
  await page.focus('input[name="d13c"]');
  const submitButton = page.getByRole("button", { name: "Submit determination" });
  await submitButton.click();
  const errorInput = page.locator('input[name="c14_error"]');
  await expect.poll(() => errorInput.getAttribute("aria-invalid")).toBe("true");
  const describedBy = (await errorInput.getAttribute("aria-describedby")) ?? "";
  const errorId = describedBy.split(" ")[0]!;
  expect(await page.textContent(`[id="${errorId}"]`)).toMatch(/error of ¹⁴C age/);

  await page.fill('input[name="c14_error"]', "45");
  const median = await page.waitForSelector('[data-testid="preview-median"]');
  const value = Number(((await median.textContent()) ?? "").replace(/[^\d]/g, ""));
  expect(value).toBeGreaterThan(11800);
  expect(value).toBeLessThan(12100);
  expect(await page.textContent('[data-testid="preview"]')).toMatch(/IntCal20/);

  await Promise.all([page.waitForURL(/\/determinations\/\d+$/), submitButton.click()]);
  await page.getByRole("heading", { level: 1, name: labCode }).waitFor();
  expect(await page.textContent("body")).toContain(`${labCode} is in the registry`);

  await page.goto(`${base}/submissions`);
  const row = page.locator(`[data-testid="submission-${labCode}"]`);
  expect(await row.locator('[data-testid="status"]').textContent()).toBe("submitted");
  expect(await row.textContent()).toContain("Browser Test Knoll");

  page.once("dialog", (dialog) => void dialog.accept());
  await Promise.all([
    page.waitForResponse((r) => r.url().includes("/submissions") && r.request().method() === "POST"),
    row.getByRole("button", { name: `Withdraw ${labCode}` }).click(),
  ]);
  await expect.poll(() => row.locator('[data-testid="status"]').textContent()).toBe("withdrawn");
  expect(await row.getByRole("button", { name: `Withdraw ${labCode}` }).count()).toBe(0);
  await page.close();
});

test("without script, choosing a new site and submitting reveals the new-site fields with their errors", async () => {
  const context = await e2e.browser.newContext({ javaScriptEnabled: false });
  const page = await context.newPage();
  const base = inject("baseUrl");
  await signInAs(page, "contributor@example.org");
  await page.goto(`${base}/submit`);
  // The registry has sites, so the form starts on "a site already in the registry".
  expect(await page.locator('input[name="site_name"]').isVisible()).toBe(false);
  await page.getByLabel("A new site").check();
  await Promise.all([page.waitForLoadState("load"), page.getByRole("button", { name: "Submit determination" }).click()]);
  const latitude = page.locator('input[name="latitude"]');
  expect(await latitude.isVisible()).toBe(true);
  expect(await latitude.getAttribute("aria-invalid")).toBe("true");
  expect(await page.getByLabel("A new site").isChecked()).toBe(true);
  await context.close();
});

import Database from "better-sqlite3";
import { expect, inject, test } from "vitest";
import { useBrowser } from "./browser.ts";
import { signInAs, waitForHydration } from "./helpers.ts";

/* An editor finds a stored paper, corrects its year from the keyboard, and sees the new citation listed. */

const baseUrl = inject("baseUrl");
const e2e = useBrowser();

test("an editor finds a paper, is told a wrong year at its field, corrects it and sees the new citation", async () => {
  const db = new Database(inject("databaseFile"), { fileMustExist: true });
  db.pragma("busy_timeout = 5000");
  const title = "Invented ages of the browser-test moraines";
  db.prepare("insert into publications (citation, authors, year, title, journal, doi) values (?, ?, ?, ?, ?, ?)").run(
    `Fixture, Q. (2011) ${title}. Journal of Tests 3, 1–4.`,
    "Fixture, Q.",
    2011,
    title,
    "Journal of Tests 3, 1–4",
    "10.99999/e2e.publication.1",
  );
  db.close();
  const context = await e2e.browser.newContext();
  const page = await context.newPage();
  try {
    await signInAs(page, "editor@example.org");
    await page.goto(`${baseUrl}/publications`);
    await waitForHydration(page);
    await page.getByLabel("Find a publication").fill("browser-test moraines");
    await page.keyboard.press("Enter");
    await page.waitForURL((url) => url.searchParams.get("q") === "browser-test moraines");
    await expect.poll(() => page.getByTestId("publications").locator("tbody tr").count()).toBe(1);
    await page.getByRole("link", { name: /^Correct the citation/ }).click();
    await page.waitForURL(/\/publications\/\d+$/);
    await waitForHydration(page);

    const year = page.getByLabel("Year");
    await year.fill("1066");
    await page.keyboard.press("Tab"); // validated as the field is left
    await expect.poll(() => page.locator(".field-error").first().textContent()).toContain("from 1700");
    await year.fill("2012");
    await expect.poll(() => page.getByTestId("citation-preview").textContent()).toContain("(2012)");
    await page.getByRole("button", { name: "Save the correction" }).press("Enter");
    await page.waitForURL((url) => url.pathname === "/publications");
    await page.getByText(`Corrected: Fixture, Q. (2012) ${title}.`).waitFor();
  } finally {
    await context.close();
  }
});

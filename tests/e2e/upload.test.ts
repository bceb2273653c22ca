import fs from "node:fs";
import ExcelJS from "exceljs";
import { describe, expect, inject, test } from "vitest";
import { useBrowserAndDatabase } from "./browser.ts";
import { signInAs } from "./helpers.ts";
import { uploadRows } from "../support/upload-files.ts";

/*
 * A contributor's spreadsheet journey: download the template, fill it with 50 rows of which 3
 * are bad, upload, read the errors, commit the valid rows, and find them calibrated in Explore.
 */

const baseUrl = inject("baseUrl");
const e2e = useBrowserAndDatabase();

describe("uploading a spreadsheet", () => {
  test("template → 50 rows with 3 bad → errors → commit the valid rows → Explore", async () => {
    const context = await e2e.browser.newContext({ acceptDownloads: true });
    const page = await context.newPage();
    await signInAs(page, "contributor@example.org");

    await page.goto(`${baseUrl}/uploads`);
    await page.getByRole("heading", { name: "Upload determinations" }).waitFor();
    const [download] = await Promise.all([
      page.waitForEvent("download"),
      page.getByRole("link", { name: "template (.xlsx)" }).click(),
    ]);
    const templatePath = await download.path();
    const workbook = new ExcelJS.Workbook();
    await workbook.xlsx.readFile(templatePath);
    const sheet = workbook.worksheets[0]!;
    const headers = (sheet.getRow(1).values as unknown[]).slice(1).map(String);
    expect(headers).toContain("lab_code");
    expect(workbook.getWorksheet("Columns")).toBeTruthy();

    // Write 50 rows of our own over the two example rows.
    const prefix = `ZE${Date.now() % 100000}Q`;
    const rows = uploadRows(50, { prefix });
    const bad = [5, 17, 33].map((i) => rows.findIndex((r, k) => k >= i && r.method === "radiocarbon"));
    rows[bad[0]!]!.c14_age = "10,5";
    rows[bad[1]!]!.c14_error = -40;
    rows[bad[2]!]!.material = "marine shel";
    rows.forEach((r, i) => {
      const row = sheet.getRow(i + 2);
      headers.forEach((h, j) => (row.getCell(j + 1).value = (r[h] ?? null) as ExcelJS.CellValue));
      row.commit();
    });
    const file = `${templatePath}-filled.xlsx`;
    await workbook.xlsx.writeFile(file);

    await page.setInputFiles("#upload-file", file);
    await Promise.all([
      page.waitForURL((url) => /^\/uploads\/[\w-]+$/.test(url.pathname) && !url.pathname.endsWith("/uploads/file")),
      page.getByRole("button", { name: "Upload and check" }).click(),
    ]);
    const summary = page.getByTestId("upload-summary").filter({ hasText: "50 rows read" });
    await summary.waitFor({ timeout: 10_000 }).catch(async (e) => {
      throw new Error(`${e}\nURL ${page.url()}\n${(await page.locator("main").textContent())?.slice(0, 800)}`);
    });
    const errors = page.getByTestId("upload-errors");
    const text = await errors.textContent();
    expect(text).toContain("use a point as the decimal separator");
    expect(text).toContain("must be greater than zero");
    expect(text).toContain('did you mean "marine shell"');
    expect(await errors.locator("tbody tr").count()).toBe(3);
    for (const i of bad) expect(text).toContain(String(i + 2));
    await expect(page.getByRole("button", { name: /Commit all 50 rows/ }).isDisabled()).resolves.toBe(true);

    await Promise.all([
      page.waitForLoadState("load"),
      page.getByRole("button", { name: "Commit the 47 valid rows only" }).click(),
    ]);
    await page.getByText(/Committed 47 determinations/).waitFor();

    await page.goto(`${baseUrl}/explore?q=${prefix}`);
    const total = page.getByTestId("explore-total");
    await total.filter({ hasText: "47 determinations" }).waitFor();
    const medians = await page.locator('[data-testid="explore-table"] tbody tr td:nth-child(6)').allTextContents();
    expect(medians.length).toBeGreaterThan(0);
    expect(medians.every((m) => /\d/.test(m))).toBe(true);

    const calibrated = e2e.db
      .prepare(
        `select count(*) from determinations d join calibrations c on c.determination_id = d.id and c.is_current = 1
         where d.lab_code like ? and c.median_cal_bp is not null and d.status = 'submitted'`,
      )
      .pluck()
      .get(`${prefix}-%`);
    expect(calibrated).toBe(47);

    // My submissions, when that page exists, lists them too.
    const submissions = await page.goto(`${baseUrl}/submissions`);
    if (submissions && submissions.status() === 200) {
      expect(await page.content()).toContain(prefix);
    }
    fs.rmSync(file, { force: true });
    await context.close();
  });
});

import Database from "better-sqlite3";
import { expect, inject, test } from "vitest";
import { useBrowser } from "./browser.ts";
import { signInAs, waitForHydration } from "./helpers.ts";

const e2e = useBrowser();

/** A three-letter start shared by at least three of the e2e registry's site names, with those names. */
function sharedStart(): { start: string; names: Map<string, number> } {
  const db = new Database(inject("databaseFile"), { readonly: true, fileMustExist: true });
  try {
    const rows = db.prepare("select id, name from sites").all() as { id: number; name: string }[];
    const byStart = new Map<string, { id: number; name: string }[]>();
    for (const r of rows) {
      const k = r.name.slice(0, 3).toLowerCase();
      byStart.set(k, [...(byStart.get(k) ?? []), r]);
    }
    const [start, sites] = [...byStart].find(([, list]) => list.length >= 3)!;
    return { start, names: new Map(sites.map((s) => [s.name, s.id])) };
  } finally {
    db.close();
  }
}

test("the site combobox: typing lists matching sites, arrow keys move, Escape closes, Enter chooses", async () => {
  const { start, names } = sharedStart();
  const page = await e2e.browser.newPage({ viewport: { width: 1280, height: 900 } });
  await signInAs(page, "contributor@example.org");
  await page.goto(`${inject("baseUrl")}/submit`);
  await waitForHydration(page);
  await page.getByLabel("A site already in the registry").check();

  const box = page.getByRole("combobox", { name: "Site" });
  const list = page.getByRole("listbox", { name: "Site: answers" });
  const options = list.getByRole("option");
  await box.pressSequentially(start);
  await expect.poll(() => options.count()).toBeGreaterThanOrEqual(3);
  expect(await box.getAttribute("aria-expanded")).toBe("true");
  // Names that start with the text come first.
  const shown = await options.locator("span.font-semibold").allTextContents();
  for (const name of shown.slice(0, 3)) expect(name.toLowerCase().startsWith(start)).toBe(true);
  for (const name of shown.slice(0, 3)) expect(names.has(name)).toBe(true);

  // ↓ takes the first answer, ↓ the second, ↑ back to the first; the input names the active one.
  const activeName = async () => {
    const id = await box.getAttribute("aria-activedescendant");
    return id ? page.locator(`[id="${id}"] span.font-semibold`).textContent() : null;
  };
  await box.press("ArrowDown");
  await expect.poll(activeName).toBe(shown[0]);
  await box.press("ArrowDown");
  await expect.poll(activeName).toBe(shown[1]);
  expect(await options.nth(1).getAttribute("aria-selected")).toBe("true");
  await box.press("ArrowUp");
  await expect.poll(activeName).toBe(shown[0]);

  // Escape closes the list and keeps the text.
  await box.press("Escape");
  await expect.poll(() => box.getAttribute("aria-expanded")).toBe("false");
  expect(await list.isHidden()).toBe(true);
  expect(await box.inputValue()).toBe(start);
  expect(await box.getAttribute("aria-activedescendant")).toBeNull();

  // ↓ opens it again; Enter chooses the active answer: its name in the field, its id in the form.
  await box.press("ArrowDown");
  await expect.poll(() => box.getAttribute("aria-expanded")).toBe("true");
  await box.press("ArrowDown");
  await expect.poll(activeName).toBe(shown[1]);
  await box.press("Enter");
  await expect.poll(() => box.inputValue()).toBe(shown[1]);
  expect(await box.getAttribute("aria-expanded")).toBe("false");
  await expect.poll(() => page.getByTestId("chosen-site").textContent()).toContain(shown[1]!);
  expect(await page.locator('input[type="hidden"][name="site_id"]').inputValue()).toBe(String(names.get(shown[1]!)));
  // Enter chose a site; it did not send the form.
  expect(new URL(page.url()).pathname).toBe("/submit");

  // Escape on a closed list clears the choice.
  await box.press("Escape");
  await expect.poll(() => box.inputValue()).toBe("");
  expect(await page.locator('input[type="hidden"][name="site_id"]').inputValue()).toBe("");
  expect(await page.getByTestId("chosen-site").count()).toBe(0);
  await page.close();
});

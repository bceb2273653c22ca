import { describe, expect, inject, test } from "vitest";
import type { Page } from "playwright-core";
import { useBrowserAndDatabase } from "./browser.ts";
import { signInAs } from "./helpers.ts";

/*
 * One journey per role through the pages that role uses (and the signed-out visitor's), asserting
 * each page answers and that no internal code reaches the words people read. Text inside <code>
 * and <pre> (API field values, curl examples) is the API's contract and is left out. Signs in with
 * the session-writing fixture (helpers.ts signInAs). Runs against the built app seeded small.
 */

const baseUrl = inject("baseUrl");
const e2e = useBrowserAndDatabase();

/** Codes that must never be shown to people as words. */
const INTERNAL_CODES: RegExp[] = [
  /\bintcal20\b/,
  /\bmarine20\b/,
  /\bdetermination\.(create|update|grade|withdraw|reopen|answer|question)\b/,
  /luminescence \(normal\)/,
  /\bguerin2011\b/,
  /\badamiec1998\b/,
  /\bliritzis2013\b/,
  /\bin_review\b/,
  /\bawaiting_answer\b/,
  /\bpartial_bleaching\b/,
  /\bold_carbon\b/,
  /\bwrong_delta_r\b/,
  /\blum\. /,
  /^DOI 10\./m,
];

/** The page's readable text, without code samples, scripts and form values. */
async function readableText(page: Page): Promise<string> {
  return page.evaluate(() => {
    const clone = document.body.cloneNode(true) as HTMLElement;
    for (const el of clone.querySelectorAll("code, pre, script, style, noscript, template, textarea, select")) el.remove();
    return clone.innerText;
  });
}

async function visit(page: Page, path: string, role: string) {
  const response = await page.goto(`${baseUrl}${path}`);
  expect(response?.status(), `${role} ${path}`).toBeLessThan(400);
  await page.locator("main h1").first().waitFor();
  const text = await readableText(page);
  for (const code of INTERNAL_CODES) {
    const hit = code.exec(text);
    expect(hit?.[0], `${role} sees "${hit?.[0]}" on ${path}`).toBeUndefined();
  }
  return text;
}

const one = (sql: string) => (e2e.db.prepare(sql).get() as { id: number | string } | undefined)?.id;

describe("each role's pages speak in words", () => {
  test("signed out: start, calibrate, API, releases, sign-in", async () => {
    const context = await e2e.browser.newContext();
    const page = await context.newPage();
    const home = await visit(page, "/", "signed out");
    expect(home).toMatch(/Sign in/);
    await visit(page, "/calibrate", "signed out");
    const api = await visit(page, "/api-docs", "signed out");
    // The test server answers over plain HTTP, and the page says so.
    expect(api).toMatch(/JSON over HTTP at/);
    await visit(page, "/releases", "signed out");
    const release = one("select slug as id from releases order by id limit 1");
    if (release) await visit(page, `/releases/${release}`, "signed out");
    await visit(page, "/sign-in", "signed out");
    // The menu offers only what a visitor may open.
    const menu = await page.locator("header nav").first().innerText();
    expect(menu).not.toMatch(/Review|My submissions|People|Model runs/);
    await context.close();
  });

  test("contributor: explore, a determination and its site, the form, uploads, own submissions with pages", async () => {
    const context = await e2e.browser.newContext();
    const page = await context.newPage();
    await signInAs(page, "contributor@example.org");
    const me = one("select id from users where email = 'contributor@example.org'")!;
    const mine = e2e.db.prepare("select count(*) as n from determinations where contributor_id = ?").get(me) as { n: number };
    const all = e2e.db.prepare("select count(*) as n from determinations").get() as { n: number };
    // The demo is spread over several contributors: the sign-in account holds a share, not everything.
    expect(mine.n).toBeGreaterThan(0);
    expect(mine.n).toBeLessThan(all.n / 3);
    await visit(page, "/explore", "contributor");
    const determination = one(
      "select d.id from determinations d join calibrations c on c.determination_id = d.id and c.is_current = 1 where d.method = 'luminescence' limit 1",
    );
    await visit(page, `/determinations/${determination}`, "contributor");
    const radiocarbon = one("select id from determinations where method = 'radiocarbon' and curve_name = 'marine20' limit 1");
    await visit(page, `/determinations/${radiocarbon}`, "contributor");
    await visit(page, `/sites/${one("select id from sites limit 1")}`, "contributor");
    await visit(page, "/submit", "contributor");
    await visit(page, "/uploads", "contributor");
    const list = await visit(page, "/submissions", "contributor");
    expect(list).toMatch(new RegExp(`${mine.n.toLocaleString("en")} determinations? in all`));
    await visit(page, "/constraints", "contributor");
    await visit(page, "/account", "contributor");
    const menu = await page.locator("header nav").first().innerText();
    expect(menu).toMatch(/My submissions/);
    expect(menu).not.toMatch(/Review\b|People|Model runs|Curves/);
    await context.close();
  });

  test("reviewer: the queue and one item", async () => {
    const context = await e2e.browser.newContext();
    const page = await context.newPage();
    await signInAs(page, "reviewer@example.org");
    await visit(page, "/review", "reviewer");
    const waiting = one("select id from determinations where status in ('submitted', 'in_review') limit 1");
    await visit(page, `/review/${waiting}`, "reviewer");
    await visit(page, "/explore", "reviewer");
    const menu = await page.locator("header nav").first().innerText();
    expect(menu).toMatch(/Review/);
    await context.close();
  });

  test("modeller: constraint sets, model runs and an ensemble, map, API", async () => {
    const context = await e2e.browser.newContext();
    const page = await context.newPage();
    await signInAs(page, "modeller@example.org");
    await visit(page, "/constraints", "modeller");
    await visit(page, "/runs", "modeller");
    const ensemble = one("select ensemble as id from model_runs where ensemble is not null limit 1");
    if (ensemble) await visit(page, `/runs/ensembles/${encodeURIComponent(String(ensemble))}`, "modeller");
    await visit(page, "/map", "modeller");
    await visit(page, "/api-docs", "modeller");
    const menu = await page.locator("header nav").first().innerText();
    expect(menu).toMatch(/Model runs/);
    await context.close();
  });

  test("editor: curves, people, releases", async () => {
    const context = await e2e.browser.newContext();
    const page = await context.newPage();
    await signInAs(page, "editor@example.org");
    await visit(page, "/curves", "editor");
    const people = await visit(page, "/people", "editor");
    // Role words promise only what exists.
    expect(people).not.toMatch(/audit log/i);
    await visit(page, "/releases", "editor");
    await context.close();
  });
});

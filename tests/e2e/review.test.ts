import crypto from "node:crypto";
import Database from "better-sqlite3";
import { createCookie } from "react-router";
import { afterAll, beforeAll, describe, expect, inject, test } from "vitest";
import type { BrowserContext } from "playwright-core";
import { useBrowser } from "./browser.ts";
import { messagesFor, waitForMessage } from "./helpers.ts";

/*
 * A reviewer's day: the queue, one date read and graded, a question about another; its
 * contributor answers from My submissions; the reviewer grades it. Runs against the built app
 * seeded small (tests/e2e/global-setup.ts).
 *
 * Sign-in: a small fixture of this file writes a session row into the app's database and sets its
 * signed cookie (the app's default development secret, which the browser tests' server uses), so
 * only the sign-in tests go through the code flow. Replace it with the shared fixture once there is one.
 */

const baseUrl = inject("baseUrl");
const session = useBrowser();
let db: Database.Database;

beforeAll(() => {
  db = new Database(inject("databaseFile"), { fileMustExist: true });
  db.pragma("busy_timeout = 5000");
});
afterAll(() => db?.close());

const sessionCookie = createCookie("thawline_session", {
  path: "/",
  httpOnly: true,
  sameSite: "lax",
  secrets: [process.env.SESSION_SECRET ?? "dev-only-session-secret-change-me"],
});

/** A browser context signed in as the person with this address. */
async function signedIn(email: string): Promise<BrowserContext> {
  const user = db.prepare("select id from users where email = ?").get(email) as { id: number };
  const id = crypto.randomBytes(32).toString("base64url");
  db.prepare("insert into sessions (id, user_id, expires_at, created_at) values (?, ?, ?, ?)").run(
    id,
    user.id,
    Date.now() + 3600_000,
    Date.now(),
  );
  const value = (await sessionCookie.serialize(id)).split(";")[0]!.split("=").slice(1).join("=");
  const context = await session.browser.newContext();
  await context.addCookies([{ name: "thawline_session", value, url: baseUrl, httpOnly: true, sameSite: "Lax" }]);
  return context;
}

const row = (id: number) =>
  db.prepare("select status, grade, lab_code as labCode from determinations where id = ?").get(id) as {
    status: string;
    grade: number | null;
    labCode: string;
  };

describe("reviewing", () => {
  test("queue → read the checks → grade one → ask about another → the contributor answers → grade it", async () => {
    // Two radiocarbon dates of the demo contributor waiting for review, with their checks stored.
    const [first, second] = db
      .prepare(
        `select d.id from determinations d join users u on u.id = d.contributor_id
         where u.email = 'contributor@example.org' and d.status in ('submitted', 'in_review') and d.method = 'radiocarbon'
           and exists (select 1 from check_results c where c.determination_id = d.id)
         order by d.created_at, d.id limit 2`,
      )
      .pluck()
      .all() as number[];
    expect(first).toBeDefined();
    expect(second).toBeDefined();

    const reviewer = await signedIn("reviewer@example.org");
    const page = await reviewer.newPage();
    await page.goto(`${baseUrl}/review`);
    await page.getByRole("heading", { name: "Review queue" }).waitFor();
    expect(await page.locator("a[data-item]").count()).toBeGreaterThan(1);

    // Read the first one: its checks, its neighbours, then grade it 2 usable.
    await page.goto(`${baseUrl}/review/${first}`);
    await page.getByRole("heading", { name: "Checks" }).waitFor();
    const checkRows = page.locator("section[aria-labelledby='checks-heading'] tbody tr");
    expect(await checkRows.count()).toBe(7);
    expect(await checkRows.filter({ hasText: "Value range" }).count()).toBe(1);
    // Worst first: a pass is never above a warning or a conflict.
    const severities = await checkRows.locator("td:nth-child(2)").allTextContents();
    const rank = (s: string) => ["conflict", "warning", "note", "pass"].findIndex((w) => s.toLowerCase().includes(w));
    expect(severities.map(rank)).toEqual([...severities.map(rank)].sort((a, b) => a - b));
    await page.getByRole("heading", { name: /^Neighbours within/ }).waitFor();
    await page.getByRole("heading", { name: /^Stratigraphic column/ }).waitFor();
    await page.locator(`input[name="grade"][value="2"]`).check();
    await page.getByLabel("Comment").fill("Consistent with its neighbours.");
    await Promise.all([
      page.waitForURL((url) => url.pathname !== `/review/${first}`),
      page.getByRole("button", { name: "Record grade" }).click(),
    ]);
    expect(row(first)).toMatchObject({ status: "graded", grade: 2 });

    // Ask the contributor about the second one.
    const mailBefore = (await messagesFor("contributor@example.org")).length;
    await page.goto(`${baseUrl}/review/${second}`);
    await page.getByLabel("Question").fill("Was the shell paired, in growth position?");
    await Promise.all([
      page.waitForURL((url) => url.pathname === "/review"),
      page.getByRole("button", { name: "Send question" }).click(),
    ]);
    expect(row(second).status).toBe("awaiting_answer");
    const mail = await waitForMessage("contributor@example.org", mailBefore);
    expect(mail.text ?? "").toContain(`/submissions/${second}/answer`);

    // The contributor finds the question in My submissions and answers it.
    const contributor = await signedIn("contributor@example.org");
    const own = await contributor.newPage();
    await own.goto(`${baseUrl}/submissions?status=awaiting_answer`);
    await Promise.all([
      own.waitForURL((url) => url.pathname === `/submissions/${second}/answer`),
      own.getByRole("link", { name: `Answer the question about ${row(second).labCode}` }).click(),
    ]);
    await own.getByText("Was the shell paired, in growth position?").waitFor();
    await own.getByLabel("Your answer").fill("Yes: paired valves, both in growth position.");
    await Promise.all([
      own.waitForURL((url) => url.pathname === "/submissions"),
      own.getByRole("button", { name: "Send answer" }).click(),
    ]);
    expect(row(second).status).toBe("in_review");

    // Back in the queue: the reviewer reads the answer and grades it 3 secure.
    await page.goto(`${baseUrl}/review/${second}`);
    await page.getByText("Yes: paired valves, both in growth position.").waitFor();
    await page.locator(`input[name="grade"][value="3"]`).check();
    await Promise.all([
      page.waitForURL((url) => url.pathname !== `/review/${second}`),
      page.getByRole("button", { name: "Record grade" }).click(),
    ]);
    expect(row(second)).toMatchObject({ status: "graded", grade: 3 });
    await reviewer.close();
    await contributor.close();
  });
});

import Database from "better-sqlite3";
import { afterAll, beforeAll, describe, expect, inject, test } from "vitest";
import type { BrowserContext } from "playwright-core";
import { useBrowser } from "./browser.ts";
import { messagesFor, signInAs, waitForHydration, waitForMessage } from "./helpers.ts";

/*
 * A reviewer's day: the queue, one date read and graded, a question about another; its
 * contributor answers from My submissions; the reviewer grades it. Runs against the built app
 * seeded small (tests/e2e/global-setup.ts).
 * Signs in through the shared fixture (helpers.ts signInAs); only the sign-in tests use the code flow.
 */

const baseUrl = inject("baseUrl");
const session = useBrowser();
let db: Database.Database;

beforeAll(() => {
  db = new Database(inject("databaseFile"), { fileMustExist: true });
  db.pragma("busy_timeout = 5000");
});
afterAll(() => db?.close());

/** A browser context signed in as the person with this address (the shared fixture, helpers.ts). */
async function signedIn(email: string): Promise<BrowserContext> {
  const context = await session.browser.newContext();
  await signInAs(context, email);
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
    // Without a grade the form says so at the field, in the browser, and nothing is recorded.
    await waitForHydration(page);
    const posts: string[] = [];
    const onRequest = (r: { method(): string; url(): string }) => void (r.method() === "POST" && posts.push(r.url()));
    page.on("request", onRequest);
    await page.getByRole("button", { name: "Record grade" }).click();
    await page.getByText("Choose a grade: 3 secure, 2 usable, 1 doubtful or 0 rejected.").waitFor();
    page.off("request", onRequest);
    expect(posts).toEqual([]);
    expect(new URL(page.url()).pathname).toBe(`/review/${first}`);
    expect(row(first).grade).toBeNull();
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

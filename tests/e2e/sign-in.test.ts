import { describe, expect, inject, test } from "vitest";
import type { BrowserContext, Page } from "playwright-core";
import { useBrowserAndDatabase } from "./browser.ts";
import { codeFrom, messagesFor, waitForMessage } from "./helpers.ts";

const baseUrl = inject("baseUrl");
const e2e = useBrowserAndDatabase();

function nameOf(email: string): string {
  const row = e2e.db.prepare("select name from users where email = ?").get(email) as { name: string } | undefined;
  if (!row) throw new Error(`The seed has no ${email}`);
  return row.name;
}

async function askForCode(page: Page, email: string) {
  const before = (await messagesFor(email)).length;
  await page.goto(`${baseUrl}/sign-in`);
  await page.getByLabel("E-mail address").fill(email);
  await page.getByRole("button", { name: "E-mail me a code" }).click();
  await page.getByRole("heading", { name: "Check your mail" }).waitFor();
  return waitForMessage(email, before);
}

async function sessionCookie(context: BrowserContext): Promise<string> {
  const cookie = (await context.cookies(baseUrl)).find((c) => c.name === "thawline_session");
  if (!cookie) throw new Error("No session cookie");
  return `${cookie.name}=${cookie.value}`;
}

describe("signing in", () => {
  test("with the code from the outbox: see your name, then sign out", async () => {
    const context = await e2e.browser.newContext();
    const page = await context.newPage();
    const email = "editor@example.org";
    const message = await askForCode(page, email);
    expect(message.subject).toMatch(/Thawline sign-in code/);

    await page.getByLabel("Code from the message").fill(codeFrom(message));
    await Promise.all([page.waitForURL(`${baseUrl}/`), page.getByRole("button", { name: "Sign in", exact: true }).click()]);
    const accountLink = page.getByRole("link", { name: nameOf(email) });
    await accountLink.waitFor();
    // Editors see the People page in the navigation.
    await page.getByRole("navigation", { name: "Main" }).getByRole("link", { name: "People" }).waitFor();

    await Promise.all([page.waitForURL(`${baseUrl}/account`), accountLink.click()]);
    await page.getByRole("heading", { name: "Where you are signed in" }).waitFor();
    expect(await page.getByText("this browser").count()).toBe(1);

    await Promise.all([
      page.waitForURL(`${baseUrl}/`),
      page.getByRole("banner").getByRole("button", { name: "Sign out", exact: true }).click(),
    ]);
    await page.getByRole("link", { name: "Sign in" }).first().waitFor();
    expect(await page.getByRole("link", { name: nameOf(email) }).count()).toBe(0);
    await page.goto(`${baseUrl}/account`);
    expect(new URL(page.url()).pathname).toBe("/sign-in");
    await context.close();
  });

  test("with the magic link, confirmed by one click", async () => {
    const context = await e2e.browser.newContext();
    const page = await context.newPage();
    const email = "modeller@example.org";
    const message = await askForCode(page, email);
    const link = /https?:\/\/\S+\/sign-in\/link\?t=\S+/.exec(message.text ?? "")?.[0];
    expect(link).toBeDefined();

    await page.goto(link!);
    await page.getByRole("heading", { name: "Finish signing in" }).waitFor();
    expect(await page.getByText(email).count()).toBeGreaterThan(0);
    await Promise.all([page.waitForURL(`${baseUrl}/`), page.getByRole("button", { name: "Sign in", exact: true }).click()]);
    await page.getByRole("link", { name: nameOf(email) }).waitFor();
    // Modellers do not see the People page.
    expect(await page.getByRole("navigation", { name: "Main" }).getByRole("link", { name: "People" }).count()).toBe(0);
    await context.close();
  });

  test("a wrong code is refused with a message at the form", async () => {
    const context = await e2e.browser.newContext();
    const page = await context.newPage();
    const message = await askForCode(page, "reviewer@example.org");
    const wrong = codeFrom(message) === "ABCDEF" ? "ABCDEG" : "ABCDEF";
    await page.getByLabel("Code from the message").fill(wrong);
    await page.getByRole("button", { name: "Sign in", exact: true }).click();
    await page.getByRole("alert").filter({ hasText: "That code is not right" }).waitFor();
    expect(new URL(page.url()).pathname).toBe("/sign-in");
    await context.close();
  });
});

describe("API tokens from the account page", () => {
  test("a token made in the browser works from the command line", async () => {
    const context = await e2e.browser.newContext();
    const page = await context.newPage();
    const email = "all-roles@example.org";
    const message = await askForCode(page, email);
    await page.getByLabel("Code from the message").fill(codeFrom(message));
    await Promise.all([page.waitForURL(`${baseUrl}/`), page.getByRole("button", { name: "Sign in", exact: true }).click()]);

    await page.goto(`${baseUrl}/account`);
    await page.getByLabel("Name of a new token").fill("browser test");
    await page.getByRole("button", { name: "Create token" }).click();
    const token = (await page.getByTestId("new-token").textContent())!.trim();
    expect(token).toMatch(/^thw_/);

    const answer = await fetch(`${baseUrl}/api/v1/me`, { headers: { Authorization: `Bearer ${token}` } });
    expect(answer.status).toBe(200);
    expect(await answer.json()).toEqual({ email, roles: ["contributor", "reviewer", "modeller", "editor"] });
    expect((await fetch(`${baseUrl}/api/v1/me`, { headers: { Authorization: "Bearer thw_nonsense" } })).status).toBe(401);
    await context.close();
  });
});

describe("the origin check", () => {
  test("answers a cross-origin POST 403 and changes nothing, on pages and resource routes", async () => {
    const context = await e2e.browser.newContext();
    const page = await context.newPage();
    const email = "contributor@example.org";
    const message = await askForCode(page, email);
    await page.getByLabel("Code from the message").fill(codeFrom(message));
    await Promise.all([page.waitForURL(`${baseUrl}/`), page.getByRole("button", { name: "Sign in", exact: true }).click()]);
    const cookie = await sessionCookie(context);
    const tokens = () => (e2e.db.prepare("select count(*) as n from api_tokens").get() as { n: number }).n;
    const before = tokens();

    const form = new URLSearchParams({ intent: "create-token", label: "planted" });
    const forged = await fetch(`${baseUrl}/account`, {
      method: "POST",
      headers: { Cookie: cookie, Origin: "http://elsewhere.example", "Content-Type": "application/x-www-form-urlencoded" },
      body: form,
      redirect: "manual",
    });
    expect(forged.status).toBe(403);
    const forgedData = await fetch(`${baseUrl}/account.data`, {
      method: "POST",
      headers: { Cookie: cookie, Origin: "http://elsewhere.example", "Content-Type": "application/x-www-form-urlencoded" },
      body: form,
      redirect: "manual",
    });
    expect(forgedData.status).toBe(403);
    const signOut = await fetch(`${baseUrl}/sign-out`, {
      method: "POST",
      headers: { Cookie: cookie, Origin: "null" },
      redirect: "manual",
    });
    expect(signOut.status).toBe(403);
    const api = await fetch(`${baseUrl}/api/v1/calibrate`, {
      method: "POST",
      headers: { Cookie: cookie, Origin: "http://elsewhere.example", "Content-Type": "application/json" },
      body: "{}",
    });
    expect(api.status).toBe(403);
    expect(tokens()).toBe(before);

    // The same request from the app's own origin goes through.
    const own = await fetch(`${baseUrl}/account`, {
      method: "POST",
      headers: { Cookie: cookie, Origin: baseUrl, "Content-Type": "application/x-www-form-urlencoded" },
      body: form,
      redirect: "manual",
    });
    expect(own.status).toBe(200);
    expect(tokens()).toBe(before + 1);
    // Still signed in: the forged sign-out changed nothing.
    await page.goto(`${baseUrl}/account`);
    expect(new URL(page.url()).pathname).toBe("/account");
    await context.close();
  });
});

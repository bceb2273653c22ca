import Database from "better-sqlite3";
import { chromium, type Browser } from "playwright-core";
import { afterAll, beforeAll, inject } from "vitest";

/** Debian's chromium, headless, with the flags this closed network needs. */
export function launchBrowser(): Promise<Browser> {
  return chromium.launch({
    executablePath: process.env.CHROMIUM_PATH ?? "/usr/bin/chromium",
    headless: true,
    args: [
      "--no-sandbox",
      "--disable-gpu",
      "--disable-background-networking",
      "--disable-component-update",
      "--disable-sync",
      "--no-first-run",
      "--disable-quic",
      "--disable-dev-shm-usage",
    ],
  });
}

/** The test file's browser: launched before its tests, closed after them. Read `.browser` inside a test. */
export function useBrowser(): { browser: Browser } {
  const session = {} as { browser: Browser };
  beforeAll(async () => {
    session.browser = await launchBrowser();
  });
  afterAll(async () => {
    await session.browser?.close();
  });
  return session;
}

/**
 * The file's browser and a read-only handle on the app's database (to check what a journey
 * wrote), both opened before its tests and closed after them.
 */
export function useBrowserAndDatabase(): { browser: Browser; db: Database.Database } {
  const session = useBrowser() as { browser: Browser; db: Database.Database };
  beforeAll(() => {
    session.db = new Database(inject("databaseFile"), { readonly: true, fileMustExist: true });
  });
  afterAll(() => {
    session.db?.close();
  });
  return session;
}

import { chromium, type Browser } from "playwright-core";

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

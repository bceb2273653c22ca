import net from "node:net";
import { expect, inject, test } from "vitest";
import { useBrowser } from "./browser.ts";
import { codeFrom, messagesFor, waitForMessage } from "./helpers.ts";

/*
 * Hardening corpus against the real production server (server.js): security headers with a
 * nonce on every inline script (case 2), a streamed body past the limit refused (case 9), a
 * hostile redirectTo after the code is spent (case 5), and no script blocked on the busiest page.
 */

const baseUrl = inject("baseUrl");
const e2e = useBrowser();

test("a page carries the CSP, and every inline script the nonce of that answer", async () => {
  const res = await fetch(`${baseUrl}/sign-in`);
  const csp = res.headers.get("content-security-policy")!;
  const nonce = /'nonce-([^']+)'/.exec(csp)?.[1];
  expect(nonce).toBeTruthy();
  expect(csp).toContain("frame-ancestors 'none'");
  expect(res.headers.get("x-content-type-options")).toBe("nosniff");
  const html = await res.text();
  const scripts = [...html.matchAll(/<script\b[^>]*>/g)].map((m) => m[0]);
  expect(scripts.length).toBeGreaterThan(0);
  for (const s of scripts) expect(s).toContain(`nonce="${nonce}"`);
});

test("a chunked 64 MB post to /sign-in is refused with 413 without being read", async () => {
  // A raw socket, so the server may answer and close while we are still writing: write errors
  // (EPIPE, ECONNRESET) are expected then, and the status line is read from what came back.
  const url = new URL(baseUrl);
  const head = await new Promise<string>((resolve, reject) => {
    const socket = net.connect(Number(url.port), url.hostname);
    let received = "";
    let done = false;
    const finish = () => {
      if (done) return;
      done = true;
      socket.destroy();
      if (/^HTTP\/1\.1 \d{3}/.test(received)) resolve(received);
      else reject(new Error(`no answer before the connection closed: ${JSON.stringify(received.slice(0, 80))}`));
    };
    socket.on("data", (data) => {
      received += data.toString("latin1");
      if (received.includes("\r\n\r\n")) finish();
    });
    socket.on("error", () => finish());
    socket.on("close", () => finish());
    socket.on("connect", () => {
      socket.write(
        "POST /sign-in HTTP/1.1\r\n" +
          `Host: ${url.host}\r\n` +
          "Content-Type: application/x-www-form-urlencoded\r\n" +
          `Origin: ${baseUrl}\r\n` +
          "Transfer-Encoding: chunked\r\n\r\n",
      );
      const body = Buffer.alloc(64 * 1024, 97);
      const chunk = Buffer.concat([Buffer.from(`${body.length.toString(16)}\r\n`), body, Buffer.from("\r\n")]);
      let sent = 0;
      const pump = () => {
        while (!done && sent < 64 * 1024 * 1024) {
          sent += body.length;
          if (!socket.write(chunk)) return void socket.once("drain", pump);
        }
        if (!done) socket.write("0\r\n\r\n");
      };
      pump();
    });
  });
  expect(head.split("\r\n")[0]).toMatch(/^HTTP\/1\.1 413 /);
  // The server is still answering.
  expect((await fetch(`${baseUrl}/sign-in`)).status).toBe(200);
});

test("signing in with a tab and a non-Latin letter in redirectTo lands on / (no 500 after the code is spent)", async () => {
  const page = await e2e.browser.newPage();
  const email = "reviewer@example.org";
  const before = (await messagesFor(email)).length;
  const response = await page.goto(`${baseUrl}/sign-in?redirectTo=${encodeURIComponent("/explore\tкарта")}`);
  expect(response!.status()).toBe(200);
  await page.fill('input[name="email"]', email);
  await page.click('button[type="submit"]');
  const message = await waitForMessage(email, before);
  await page.waitForSelector('input[name="code"]');
  await page.fill('input[name="code"]', codeFrom(message));
  const [answer] = await Promise.all([
    page.waitForResponse((r) => r.request().method() === "POST"),
    page.click('button[type="submit"]'),
  ]);
  expect(answer.status()).toBeLessThan(500);
  await page.waitForURL((url) => !url.pathname.startsWith("/sign-in"));
  expect(new URL(page.url()).pathname).toBe("/");
  await page.close();
});

test("the map page runs under the policy: no script or style refused", async () => {
  const page = await e2e.browser.newPage();
  const email = "modeller@example.org";
  const before = (await messagesFor(email)).length;
  await page.goto(`${baseUrl}/sign-in`);
  await page.fill('input[name="email"]', email);
  await page.click('button[type="submit"]');
  const message = await waitForMessage(email, before);
  await page.waitForSelector('input[name="code"]');
  await page.fill('input[name="code"]', codeFrom(message));
  await Promise.all([page.waitForURL((url) => !url.pathname.startsWith("/sign-in")), page.click('button[type="submit"]')]);
  const refused: string[] = [];
  page.on("console", (m) => {
    if (/Content Security Policy/i.test(m.text())) refused.push(m.text());
  });
  await page.goto(`${baseUrl}/map`);
  await page.getByTestId("map-ready").waitFor({ state: "attached", timeout: 30_000 });
  expect(refused).toEqual([]);
  await page.close();
});

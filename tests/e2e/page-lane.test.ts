import http from "node:http";
import zlib from "node:zlib";
import Database from "better-sqlite3";
import { createCookie } from "react-router";
import { afterAll, beforeAll, expect, inject, test } from "vitest";
import { useBrowser } from "./browser.ts";
import { signInAs, waitForHydration } from "./helpers.ts";

/*
 * A page that opted in (Explore) is answered, the second time the same person asks for it with the
 * registry unchanged, before React Router runs (app/http/page-lane.js): the kept page, its nonce
 * spliced in, already gzip-compressed. From outside it must be the full answer exactly, apart from
 * the nonce — and never outlive the session or the registry state it was made for.
 */

const baseUrl = inject("baseUrl");
const e2e = useBrowser();
let db: Database.Database;

beforeAll(() => {
  db = new Database(inject("databaseFile"), { fileMustExist: true });
  db.pragma("busy_timeout = 5000");
});
afterAll(() => db.close());

type Answer = { status: number; headers: http.IncomingHttpHeaders; raw: Buffer; text: string; nonce: string };

/** A GET with exactly these headers (no client library deciding the encoding). */
function get(path: string, headers: Record<string, string>): Promise<Answer> {
  return new Promise((resolve, reject) => {
    http
      .get(`${baseUrl}${path}`, { headers }, (res) => {
        const chunks: Buffer[] = [];
        res.on("data", (c: Buffer) => chunks.push(c));
        res.on("end", () => {
          const raw = Buffer.concat(chunks);
          // gunzipSync checks the CRC-32 and the length in the gzip trailer.
          const encoding = res.headers["content-encoding"];
          const body = encoding === "gzip" ? zlib.gunzipSync(raw) : encoding === "br" ? zlib.brotliDecompressSync(raw) : raw;
          const nonce = /'nonce-([^']+)'/.exec(String(res.headers["content-security-policy"] ?? ""))?.[1] ?? "";
          resolve({ status: res.statusCode!, headers: res.headers, raw, text: body.toString("utf8"), nonce });
        });
      })
      .on("error", reject);
  });
}

async function cookieFor(email: string): Promise<{ cookie: string; sessionId: string }> {
  const context = await e2e.browser.newContext();
  try {
    const { sessionId } = await signInAs(context, email);
    const cookies = await context.cookies(baseUrl);
    return { cookie: cookies.map((c) => `${c.name}=${c.value}`).join("; "), sessionId };
  } finally {
    await context.close();
  }
}

const fromLane = (a: Answer) => String(a.headers["server-timing"] ?? "").includes("lane");
const sameApartFromNonce = (a: Answer, b: Answer) =>
  expect(b.text.replaceAll(b.nonce, "N")).toBe(a.text.replaceAll(a.nonce, "N"));

test("the second same request takes the lane: the full answer's content and headers, its own nonce, valid gzip", async () => {
  const { cookie } = await cookieFor("modeller@example.org");
  const headers = { Cookie: cookie, "Accept-Encoding": "gzip, br" };
  const full = await get("/explore?sort=labCode", headers);
  expect(full.status).toBe(200);
  expect(fromLane(full)).toBe(false);
  const laned = await get("/explore?sort=labCode", headers);
  expect(laned.status).toBe(200);
  expect(fromLane(laned)).toBe(true);
  expect(laned.headers["content-encoding"]).toBe("gzip");
  expect(Number(laned.headers["content-length"])).toBe(laned.raw.length);
  expect(laned.nonce).toBeTruthy();
  expect(laned.nonce).not.toBe(full.nonce);
  sameApartFromNonce(full, laned);
  const scripts = [...laned.text.matchAll(/<script\b[^>]*>/g)].map((m) => m[0]);
  expect(scripts.length).toBeGreaterThan(0);
  for (const s of scripts) expect(s).toContain(`nonce="${laned.nonce}"`);
  for (const name of ["content-type", "x-frame-options", "x-content-type-options", "referrer-policy"]) {
    expect(laned.headers[name], name).toBe(full.headers[name]);
  }
  const policy = (a: Answer) => String(a.headers["content-security-policy"]).replace(a.nonce, "N");
  expect(policy(laned)).toBe(policy(full));

  // A client that takes no gzip gets the same page plain.
  const plain = await get("/explore?sort=labCode", { Cookie: cookie });
  expect(fromLane(plain)).toBe(true);
  expect(plain.headers["content-encoding"]).toBeUndefined();
  sameApartFromNonce(full, plain);
  const refused = await get("/explore?sort=labCode", { Cookie: cookie, "Accept-Encoding": "gzip;q=0, identity" });
  expect(refused.headers["content-encoding"]).toBeUndefined();
  sameApartFromNonce(full, refused);
});

test("a session that has ended never takes the lane: the same cookie is sent to sign in", async () => {
  const { cookie, sessionId } = await cookieFor("modeller@example.org");
  const headers = { Cookie: cookie, "Accept-Encoding": "gzip" };
  await get("/explore?sort=site", headers);
  expect(fromLane(await get("/explore?sort=site", headers))).toBe(true);
  // Signing out deletes the session row; sessions do not move the registry's counter.
  db.prepare("delete from sessions where id = ?").run(sessionId);
  const after = await get("/explore?sort=site", headers);
  expect(after.status).toBe(302);
  expect(after.headers.location).toContain("/sign-in");
});

test("a write to the registry ends the lane: the next answer is fresh", async () => {
  const { cookie } = await cookieFor("modeller@example.org");
  const headers = { Cookie: cookie, "Accept-Encoding": "gzip" };
  const lab = db.prepare("select id, name from labs order by name limit 1").get() as { id: number; name: string };
  try {
    await get("/explore?sort=labCode&dir=asc", headers);
    const before = await get("/explore?sort=labCode&dir=asc", headers);
    expect(fromLane(before)).toBe(true);
    expect(before.text).toContain(lab.name);
    db.prepare("update labs set name = ? where id = ?").run(`${lab.name} (renamed for a moment)`, lab.id);
    const after = await get("/explore?sort=labCode&dir=asc", headers);
    expect(fromLane(after)).toBe(false);
    expect(after.text).toContain(`${lab.name} (renamed for a moment)`);
  } finally {
    db.prepare("update labs set name = ? where id = ?").run(lab.name, lab.id);
  }
});

test("two people at the same address each get their own page; a flash message is shown, not laned", async () => {
  const modeller = await cookieFor("modeller@example.org");
  const reviewer = await cookieFor("reviewer@example.org");
  for (let i = 0; i < 2; i++) {
    await get("/explore?page=2", { Cookie: modeller.cookie, "Accept-Encoding": "gzip" });
    await get("/explore?page=2", { Cookie: reviewer.cookie, "Accept-Encoding": "gzip" });
  }
  const mine = await get("/explore?page=2", { Cookie: modeller.cookie, "Accept-Encoding": "gzip" });
  const theirs = await get("/explore?page=2", { Cookie: reviewer.cookie, "Accept-Encoding": "gzip" });
  expect(fromLane(mine) && fromLane(theirs)).toBe(true);
  expect(mine.text).toContain("Demo Modeller");
  expect(mine.text).not.toContain("Demo Reviewer");
  expect(theirs.text).toContain("Demo Reviewer");
  expect(theirs.text).not.toContain("Demo Modeller");

  const flashCookie = createCookie("thawline_flash", { secrets: [inject("sessionSecret")], path: "/" });
  const flash = (await flashCookie.serialize({ kind: "success", message: "Saved for a moment." })).split(";")[0]!;
  for (let i = 0; i < 3; i++) {
    const shown = await get("/explore?page=2", { Cookie: `${modeller.cookie}; ${flash}`, "Accept-Encoding": "gzip" });
    expect(fromLane(shown)).toBe(false);
    expect(shown.text).toContain("Saved for a moment.");
    expect(String(shown.headers["set-cookie"])).toMatch(/thawline_flash=.*Max-Age=0/i);
  }
});

test("a page that did not opt in never takes the lane", async () => {
  const { cookie } = await cookieFor("modeller@example.org");
  for (const path of ["/constraints", "/explore/map", "/"]) {
    for (let i = 0; i < 3; i++) {
      const answer = await get(path, { Cookie: cookie, "Accept-Encoding": "gzip" });
      expect(fromLane(answer), path).toBe(false);
    }
  }
});

test("in the browser a laned page hydrates under the policy and works: sorting by a column", async () => {
  const context = await e2e.browser.newContext();
  const page = await context.newPage();
  try {
    await signInAs(page, "modeller@example.org");
    const problems: string[] = [];
    page.on("console", (m) => {
      if (m.type() === "error") problems.push(m.text());
    });
    page.on("pageerror", (e) => problems.push(e.message));
    await page.goto(`${baseUrl}/explore?sort=grade`);
    const second = await page.goto(`${baseUrl}/explore?sort=grade`);
    expect(second!.headers()["server-timing"]).toContain("lane");
    await waitForHydration(page);
    await page.getByRole("link", { name: /^Lab code/ }).click();
    await page.waitForURL((url) => url.searchParams.get("sort") === "labCode");
    await expect.poll(() => page.locator("tbody tr").count()).toBeGreaterThan(0);
    expect(problems).toEqual([]);
  } finally {
    await context.close();
  }
});

import Database from "better-sqlite3";
import { expect, inject, test } from "vitest";
import { useBrowser } from "./browser.ts";
import { signInAs } from "./helpers.ts";

/*
 * The production server keeps a finished page and answers the same page from the same loader data
 * with it (app/utils/page-memo.server.ts). From outside that must be invisible: each answer has a
 * nonce of its own on every inline script, two people never see each other's page, and a write to
 * the registry shows at once.
 */

const baseUrl = inject("baseUrl");
const e2e = useBrowser();

const nonceOf = (csp: string | undefined) => /'nonce-([^']+)'/.exec(csp ?? "")?.[1] ?? "";

async function explore(email: string) {
  const context = await e2e.browser.newContext();
  await signInAs(context, email);
  return {
    async get() {
      const res = await context.request.get(`${baseUrl}/explore`);
      expect(res.status()).toBe(200);
      return { nonce: nonceOf(res.headers()["content-security-policy"]), html: await res.text() };
    },
    close: () => context.close(),
  };
}

test("the same page twice: the same content, each answer with its own nonce on every inline script", async () => {
  const modeller = await explore("modeller@example.org");
  try {
    const a = await modeller.get();
    const b = await modeller.get();
    expect(a.nonce).toBeTruthy();
    expect(b.nonce).toBeTruthy();
    expect(b.nonce).not.toBe(a.nonce);
    for (const answer of [a, b]) {
      const scripts = [...answer.html.matchAll(/<script\b[^>]*>/g)].map((m) => m[0]);
      expect(scripts.length).toBeGreaterThan(0);
      for (const s of scripts) expect(s).toContain(`nonce="${answer.nonce}"`);
    }
    expect(b.html.replaceAll(b.nonce, "N")).toBe(a.html.replaceAll(a.nonce, "N"));
  } finally {
    await modeller.close();
  }
});

test("two people asking for the same page each get their own", async () => {
  const modeller = await explore("modeller@example.org");
  const reviewer = await explore("reviewer@example.org");
  try {
    await modeller.get();
    const mine = (await modeller.get()).html;
    const theirs = (await reviewer.get()).html;
    expect(mine).toContain("Demo Modeller");
    expect(mine).not.toContain("Demo Reviewer");
    expect(theirs).toContain("Demo Reviewer");
    expect(theirs).not.toContain("Demo Modeller");
  } finally {
    await modeller.close();
    await reviewer.close();
  }
});

test("a write to the registry shows on the next answer", async () => {
  const modeller = await explore("modeller@example.org");
  const db = new Database(inject("databaseFile"), { fileMustExist: true });
  db.pragma("busy_timeout = 5000");
  const lab = db.prepare("select id, name from labs order by name limit 1").get() as { id: number; name: string };
  try {
    const before = (await modeller.get()).html;
    expect(before).toContain(lab.name);
    db.prepare("update labs set name = ? where id = ?").run(`${lab.name} (renamed for a moment)`, lab.id);
    const after = (await modeller.get()).html;
    expect(after).toContain(`${lab.name} (renamed for a moment)`);
  } finally {
    db.prepare("update labs set name = ? where id = ?").run(lab.name, lab.id);
    db.close();
    await modeller.close();
  }
});

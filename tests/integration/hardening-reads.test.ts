import Database from "better-sqlite3";
import { drizzle } from "drizzle-orm/better-sqlite3";
import { eq } from "drizzle-orm";
import { describe, expect, it } from "vitest";
import { getDb, setDb, schema, type Db } from "#app/db/client.server.ts";
import { apiTokens } from "#app/db/schema.ts";
import { createToken } from "#app/models/accounts/tokens.server.ts";
import { setActive } from "#app/models/accounts/users.server.ts";
import { args, get, personWithSession, run } from "#tests/support/auth.ts";
import { createTestDetermination } from "#tests/factories.ts";

/*
 * Hardening corpus, cases 4 and 12: deactivation revokes tokens; reads never write (or wait for a
 * writer) — checked on a read-only connection to the same file, as with the file at mode 444.
 */

const me = await import("#app/routes/api/v1/me.ts");
const determinationsApi = await import("#app/routes/api/v1/determinations.ts");
const explore = await import("#app/routes/explore/explore.tsx");
const mapSites = await import("#app/routes/resources/map-sites.ts");
const account = await import("#app/routes/account/account.tsx");
const home = await import("#app/routes/home.tsx");

const bearer = (token: string) => ({ headers: { Authorization: `Bearer ${token}` } });

/** Runs `fn` with the app pointed at a read-only connection to its own database file. */
async function readOnly<T>(fn: () => Promise<T>): Promise<T> {
  const writable = getDb();
  const ro = new Database(writable.$client.name, { readonly: true, fileMustExist: true });
  setDb(drizzle(ro, { schema }) as Db);
  try {
    return await fn();
  } finally {
    setDb(writable);
    ro.close();
  }
}

describe("case 4: deactivating a person revokes their tokens", () => {
  it("the token is revoked, and stays refused after reactivation", async () => {
    const editor = await personWithSession(["editor"]);
    const p = await personWithSession(["modeller"]);
    const { token, id } = createToken(getDb(), p.id, "script", { actorId: p.id });
    setActive(getDb(), p.id, false, { actorId: editor.id });
    expect(getDb().select().from(apiTokens).where(eq(apiTokens.id, id)).get()!.revokedAt).not.toBeNull();
    setActive(getDb(), p.id, true, { actorId: editor.id });
    expect((await run(() => me.loader(args(get("/api/v1/me", bearer(token)))))).status).toBe(401);
  });
});

describe("case 12: reads that write", () => {
  it("records last use at most once a minute per token", async () => {
    const p = await personWithSession(["modeller"]);
    const { token, id } = createToken(getDb(), p.id, "script", { actorId: p.id });
    const lastUsed = () => getDb().select().from(apiTokens).where(eq(apiTokens.id, id)).get()!.lastUsedAt;
    await run(() => me.loader(args(get("/api/v1/me", bearer(token)))));
    const first = lastUsed();
    expect(first).not.toBeNull();
    await new Promise((r) => setTimeout(r, 5));
    await run(() => me.loader(args(get("/api/v1/me", bearer(token)))));
    expect(lastUsed()!.getTime()).toBe(first!.getTime());
    // A minute later it is written again.
    getDb()
      .update(apiTokens)
      .set({ lastUsedAt: new Date(Date.now() - 61_000) })
      .where(eq(apiTokens.id, id))
      .run();
    await run(() => me.loader(args(get("/api/v1/me", bearer(token)))));
    expect(Date.now() - lastUsed()!.getTime()).toBeLessThan(10_000);
  });

  it("a token GET succeeds while another connection holds the write lock", async () => {
    const p = await personWithSession(["modeller"]);
    const { token } = createToken(getDb(), p.id, "script", { actorId: p.id });
    const writer = new Database(getDb().$client.name);
    writer.exec("begin immediate");
    try {
      const res = await run(() => me.loader(args(get("/api/v1/me", bearer(token)))));
      expect(res.status).toBe(200);
    } finally {
      writer.exec("rollback");
      writer.close();
    }
  });

  it("GETs answer on a read-only database (nothing they do writes)", async () => {
    const p = await personWithSession(["modeller"]);
    const { token } = createToken(getDb(), p.id, "script", { actorId: p.id });
    const cookie = { cookie: p.cookie };
    const outcomes = await readOnly(async () => ({
      me: (await run(() => me.loader(args(get("/api/v1/me", bearer(token)))))).status,
      determinations: (await run(() => determinationsApi.loader(args(get("/api/v1/determinations", bearer(token)))))).status,
      explore: (await run(() => explore.loader(args(get("/explore", cookie))))).status,
      mapSites: (await run(() => mapSites.loader(args(get("/api/map-sites", cookie))))).status,
      account: (await run(() => account.loader(args(get("/account", cookie))))).status,
      home: (await run(() => home.loader(args(get("/", cookie))))).status,
    }));
    expect(outcomes).toEqual({ me: 200, determinations: 200, explore: 200, mapSites: 200, account: 200, home: 200 });
  });
});

describe("repeated reads are cached until the registry changes", () => {
  it("the map data answers 304 to its ETag, and a new ETag with the new name after a write", async () => {
    const p = await personWithSession(["modeller"]);
    createTestDetermination(getDb());
    const first = await mapSites.loader(args(get("/api/map-sites", { cookie: p.cookie })));
    const etag = first.headers.get("ETag")!;
    expect(etag).toMatch(/^".+"$/);
    const again = await mapSites.loader(args(get("/api/map-sites", { cookie: p.cookie, headers: { "If-None-Match": etag } })));
    expect(again.status).toBe(304);
    const { sites } = (await first.json()) as { sites: { id: number; name: string }[] };
    expect(sites.length).toBeGreaterThan(0);
    // A write through another connection (a worker, a second process) is seen too.
    const other = new Database(getDb().$client.name);
    other.prepare("update sites set name = 'Renamed Cove' where id = ?").run(sites[0]!.id);
    other.close();
    const after = await mapSites.loader(args(get("/api/map-sites", { cookie: p.cookie, headers: { "If-None-Match": etag } })));
    expect(after.status).toBe(200);
    expect(after.headers.get("ETag")).not.toBe(etag);
    expect(
      ((await after.json()) as { sites: { id: number; name: string }[] }).sites.find((s) => s.id === sites[0]!.id)!.name,
    ).toBe("Renamed Cove");
  });
});

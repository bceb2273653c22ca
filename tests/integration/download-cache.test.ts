import zlib from "node:zlib";
import Database from "better-sqlite3";
import { afterEach, describe, expect, it } from "vitest";
import { seedForFile } from "#tests/support/test-db.ts";
import { getDb } from "#app/db/client.server.ts";
import { createToken } from "#app/models/accounts/tokens.server.ts";
import { clearDownloadCache, downloadCacheState, setDownloadCacheLimits } from "#app/models/registry/download-cache.server.ts";
import { publishRelease } from "#app/models/releases/releases.server.ts";
import { parseConstraintFilter } from "#app/utils/constraint-filter.ts";
import * as constraintsApi from "#app/routes/api/v1/constraints.ts";
import * as constraintsPage from "#app/routes/resources/constraints-download.ts";
import * as determinationsApi from "#app/routes/api/v1/determinations.ts";
import * as releaseApi from "#app/routes/api/v1/release.ts";
import { seedDemo } from "#seed/seed.server.ts";
import { args, get, personWithSession, run } from "#tests/support/auth.ts";
import { createTestUser } from "#tests/factories.ts";

/*
 * Finished downloads and JSON answers are kept with their encodings (download-cache.server.ts,
 * encoded-body.server.ts): what a client receives must be exactly what an uncached answer was,
 * in every encoding, until the registry changes; a refused request never reaches the cache; and
 * the memory bound holds.
 */

const ORIGIN = "http://localhost";
let token = "";
let slug = "";

seedForFile(async () => {
  const db = getDb();
  await seedDemo(db, { size: "small" });
  const modeller = createTestUser(db, ["modeller"]);
  const editor = createTestUser(db, ["editor"]);
  token = createToken(db, modeller.id, "cache", { actorId: modeller.id }).token;
  const parsed = parseConstraintFilter(new URLSearchParams("min_grade=2"));
  if (!parsed.ok) throw new Error(parsed.errors.join("; "));
  slug = publishRelease(db, {
    name: "Cache test",
    version: "1",
    filter: parsed.filter,
    userId: editor.id,
    baseUrl: `${ORIGIN}/releases/`,
  }).slug;
});

afterEach(() => {
  clearDownloadCache();
  setDownloadCacheLimits({ maxBytes: 64 * 1024 * 1024, maxEntryBytes: 16 * 1024 * 1024 });
});

const request = (path: string, headers: Record<string, string> = {}, withToken = true) =>
  new Request(`${ORIGIN}${path}`, { headers: { ...(withToken ? { Authorization: `Bearer ${token}` } : {}), ...headers } });
const constraints = (query: string, headers: Record<string, string> = {}, withToken = true) =>
  constraintsApi.loader(args(request(`/api/v1/constraints?${query}`, headers, withToken))) as Promise<Response>;
const release = (query: string, headers: Record<string, string> = {}) =>
  releaseApi.loader(args(request(`/api/v1/releases/${slug}?${query}`, headers, false), { slug })) as Promise<Response>;
const bytes = async (r: Response) => Buffer.from(await r.arrayBuffer());

function decoded(r: Response, body: Buffer): Buffer {
  const coding = r.headers.get("Content-Encoding");
  if (coding === "br") return zlib.brotliDecompressSync(body);
  if (coding === "gzip") return zlib.gunzipSync(body);
  expect(coding).toBeNull();
  return body;
}

/** The headers a client sees, without those that describe the encoding and the cache. */
function contractHeaders(r: Response) {
  const out: Record<string, string> = {};
  for (const [k, v] of r.headers) if (!["etag", "vary", "content-encoding", "content-length"].includes(k)) out[k] = v;
  return out;
}

describe("kept downloads are the uncached answer, byte for byte, in every encoding", () => {
  it.each([
    ["the constraint CSV", (h: Record<string, string>) => constraints("format=csv&min_grade=2", h)],
    ["the constraint JSON", (h: Record<string, string>) => constraints("format=json&min_grade=1", h)],
    ["a release's CSV", (h: Record<string, string>) => release("format=csv", h)],
    ["a release's JSON with densities", (h: Record<string, string>) => release("format=json&densities=true", h)],
  ])("%s", async (_name, ask) => {
    const first = await ask({});
    expect(first.status).toBe(200);
    const identity = await bytes(first);
    expect(identity.length).toBeGreaterThan(1000);
    expect(downloadCacheState().keys).toHaveLength(1);
    for (const accept of ["", "gzip", "br", "gzip, deflate, br", "br;q=0, gzip;q=1"]) {
      const r = await ask(accept ? { "Accept-Encoding": accept } : {});
      expect(r.status).toBe(200);
      expect(r.headers.get("Content-Encoding")).toBe(
        accept === "" ? null : accept.includes("br") && !accept.includes("br;q=0") ? "br" : "gzip",
      );
      expect(r.headers.get("Vary")).toContain("Accept-Encoding");
      expect(contractHeaders(r)).toEqual(contractHeaders(first));
      const body = await bytes(r);
      expect(Number(r.headers.get("Content-Length"))).toBe(body.length);
      expect(decoded(r, body).equals(identity)).toBe(true);
    }
  });

  it("answers 304 to the ETag of any of its encodings, and 200 to another", async () => {
    await bytes(await constraints("format=csv"));
    const br = await constraints("format=csv", { "Accept-Encoding": "br" });
    const gzip = await constraints("format=csv", { "Accept-Encoding": "gzip" });
    const plain = await constraints("format=csv");
    const tags = [br, gzip, plain].map((r) => r.headers.get("ETag")!);
    expect(new Set(tags).size).toBe(3);
    for (const tag of tags) {
      const again = await constraints("format=csv", { "If-None-Match": tag, "Accept-Encoding": "br" });
      expect(again.status).toBe(304);
      expect(again.body).toBeNull();
    }
    expect((await constraints("format=csv", { "If-None-Match": '"something-else"' })).status).toBe(200);
  });

  it("a selection's kept answer changes after a registry write; a release's does not", async () => {
    const before = (await bytes(await constraints("format=csv"))).toString();
    const releaseBefore = (await bytes(await release("format=csv"))).toString();
    const kept = await constraints("format=csv");
    expect((await bytes(kept)).toString()).toBe(before);
    const siteId = Number(before.split("\r\n")[1]!.split(",")[3]);
    expect(siteId).toBeGreaterThan(0);
    // A write through another connection (a worker, a second process).
    const other = new Database(getDb().$client.name);
    other.prepare("update sites set name = 'Renamed Cove' where id = ?").run(siteId);
    other.close();
    const after = await constraints("format=csv", { "If-None-Match": kept.headers.get("ETag")! });
    expect(after.status).toBe(200);
    const text = (await bytes(after)).toString();
    expect(text).not.toBe(before);
    expect(text).toContain("Renamed Cove");
    expect((await bytes(await release("format=csv"))).toString()).toBe(releaseBefore);
  });
});

describe("a client that goes away", () => {
  it("leaves no one waiting: the next request for the same download is answered", async () => {
    const abandoned = await constraints("format=csv", { "Accept-Encoding": "br" });
    expect(abandoned.status).toBe(200);
    // Its body is never read nor cancelled (as when the client closed before the answer started).
    const next = await Promise.race([
      constraints("format=csv").then(bytes),
      new Promise<null>((resolve) => setTimeout(() => resolve(null), 5000)),
    ]);
    expect(next?.toString().startsWith("id,lab_code,")).toBe(true);
  });
});

describe("access is checked before the cache", () => {
  it("no token, a bad token, and a signed-out page download are refused though the answer is held", async () => {
    await bytes(await constraints("format=csv"));
    const person = await personWithSession(["modeller"]);
    const page = (cookie?: string) =>
      run(() => constraintsPage.loader(args(get("/constraints/download?format=csv&min_grade=2", { cookie }))));
    expect((await page(person.cookie)).status).toBe(200);
    await bytes(await constraints("format=json"));
    // Least recently used first: a request that consulted the cache would move its key to the end.
    const state = downloadCacheState();
    expect(state.keys).toHaveLength(3);
    expect((await run(() => constraints("format=csv", {}, false))).status).toBe(401);
    expect(
      (
        await run(() =>
          constraintsApi.loader(
            args(new Request(`${ORIGIN}/api/v1/constraints?format=csv`, { headers: { Authorization: "Bearer nope" } })),
          ),
        )
      ).status,
    ).toBe(401);
    const signedOut = await page();
    expect(signedOut.status).not.toBe(200);
    expect(downloadCacheState()).toEqual(state);
    // …and a permitted request does move it (the check above can fail).
    await bytes(await constraints("format=csv"));
    expect(downloadCacheState().keys).not.toEqual(state.keys);
  });
});

describe("the memory bound", () => {
  it("evicts the least recently used download when the total passes the bound", async () => {
    const a = await bytes(await constraints("format=csv&min_grade=1"));
    const b = await bytes(await constraints("format=csv&min_grade=2"));
    expect(downloadCacheState().keys).toHaveLength(2);
    setDownloadCacheLimits({ maxBytes: a.length + b.length + 10 });
    expect(downloadCacheState().keys).toHaveLength(2);
    // An encoding added to the newer entry pushes the total past the bound: the older one goes.
    await bytes(await constraints("format=csv&min_grade=2", { "Accept-Encoding": "gzip" }));
    const state = downloadCacheState();
    expect(state.keys).toHaveLength(1);
    expect(state.keys[0]).toContain("min_grade=2");
    expect(state.bytes).toBeLessThanOrEqual(a.length + b.length + 10);
  });

  it("never keeps an answer larger than the per-entry bound, and still sends it whole", async () => {
    setDownloadCacheLimits({ maxEntryBytes: 10_000 });
    const first = await bytes(await constraints("format=csv"));
    expect(first.length).toBeGreaterThan(10_000);
    expect(downloadCacheState()).toEqual({ keys: [], bytes: 0 });
    expect((await bytes(await constraints("format=csv"))).equals(first)).toBe(true);
  });
});

describe("cached JSON answers carry their encodings", () => {
  it("the determinations API decodes to the plain answer and is 304 to its ETag", async () => {
    const ask = (headers: Record<string, string> = {}) =>
      determinationsApi.loader(args(request("/api/v1/determinations?per_page=200", headers))) as Promise<Response>;
    const plain = await bytes(await ask());
    expect(JSON.parse(plain.toString()).determinations.length).toBeGreaterThan(0);
    for (const accept of ["br", "gzip"]) {
      const r = await ask({ "Accept-Encoding": accept });
      expect(r.headers.get("Content-Encoding")).toBe(accept);
      expect(r.headers.get("Content-Type")).toBe("application/json; charset=utf-8");
      expect(decoded(r, await bytes(r)).equals(plain)).toBe(true);
      expect((await ask({ "Accept-Encoding": accept, "If-None-Match": r.headers.get("ETag")! })).status).toBe(304);
    }
    expect((await run(() => determinationsApi.loader(args(get("/api/v1/determinations"))))).status).toBe(401);
  });
});

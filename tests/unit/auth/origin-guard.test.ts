import http from "node:http";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { crossOriginRefusal, originGuard } from "#app/utils/origin-guard.js";

const own = { host: "registry.example.org" };

function check(method: string, headers: Record<string, string>, extra: { appUrl?: string; trustProxy?: boolean } = {}) {
  return crossOriginRefusal({ method, headers: { ...own, ...headers }, ...extra });
}

describe("crossOriginRefusal", () => {
  it("lets reads through whatever their origin", () => {
    for (const method of ["GET", "HEAD", "OPTIONS"]) expect(check(method, { origin: "https://elsewhere.example" })).toBeNull();
  });

  it("lets same-origin writes through", () => {
    expect(check("POST", { origin: "https://registry.example.org" })).toBeNull();
    expect(check("POST", { "sec-fetch-site": "same-origin" })).toBeNull();
    expect(check("POST", { referer: "https://registry.example.org/people" })).toBeNull();
  });

  it("refuses writes from another site, by any method", () => {
    for (const method of ["POST", "PUT", "PATCH", "DELETE"]) {
      expect(check(method, { origin: "https://elsewhere.example" })).toMatch(/another site/);
    }
    expect(check("POST", { origin: "https://registry.example.org.elsewhere.example" })).not.toBeNull();
    expect(check("POST", { origin: "null" })).toMatch(/opaque/);
    expect(check("POST", { "sec-fetch-site": "cross-site" })).not.toBeNull();
    expect(check("POST", { "sec-fetch-site": "same-site" })).not.toBeNull();
    expect(check("POST", { referer: "https://elsewhere.example/form" })).not.toBeNull();
  });

  it("accepts the configured public address behind a proxy that rewrites Host", () => {
    const headers = { host: "127.0.0.1:3000", origin: "https://registry.example.org" };
    expect(crossOriginRefusal({ method: "POST", headers })).not.toBeNull();
    expect(crossOriginRefusal({ method: "POST", headers, appUrl: "https://registry.example.org" })).toBeNull();
    const forwarded = {
      host: "127.0.0.1:3000",
      origin: "https://registry.example.org",
      "x-forwarded-host": "registry.example.org",
    };
    expect(crossOriginRefusal({ method: "POST", headers: forwarded })).not.toBeNull();
    expect(crossOriginRefusal({ method: "POST", headers: forwarded, trustProxy: true })).toBeNull();
  });

  it("exempts token requests without cookies, not token requests with cookies", () => {
    expect(check("POST", { authorization: "Bearer thw_abc", origin: "https://elsewhere.example" })).toBeNull();
    expect(
      check("POST", { authorization: "Bearer thw_abc", cookie: "thawline_session=x", origin: "https://elsewhere.example" }),
    ).not.toBeNull();
  });

  it("lets clients that send no browser headers through (they carry no visitor's cookies)", () => {
    expect(check("POST", {})).toBeNull();
  });

  it("reads Fetch Headers too", () => {
    const headers = new Headers({ host: "registry.example.org", origin: "https://elsewhere.example" });
    expect(crossOriginRefusal({ method: "POST", headers })).not.toBeNull();
  });
});

describe("originGuard middleware", () => {
  let server: http.Server;
  let base = "";
  let reached = 0;
  beforeAll(async () => {
    const guard = originGuard();
    server = http.createServer((req, res) =>
      guard(req, res, () => {
        reached += 1;
        res.end("changed");
      }),
    );
    await new Promise<void>((resolve) => server.listen(0, "127.0.0.1", resolve));
    base = `http://127.0.0.1:${(server.address() as { port: number }).port}`;
  });
  afterAll(() => new Promise<void>((resolve) => server.close(() => resolve())));

  it("answers a cross-origin POST 403 without reaching the app; same-origin POSTs pass", async () => {
    const before = reached;
    const refused = await fetch(`${base}/people`, {
      method: "POST",
      headers: { Origin: "https://elsewhere.example" },
      body: "x=1",
    });
    expect(refused.status).toBe(403);
    expect(reached).toBe(before);
    const api = await fetch(`${base}/api/v1/me`, {
      method: "POST",
      headers: { Origin: "https://elsewhere.example", Cookie: "a=b" },
    });
    expect(api.status).toBe(403);
    expect(await api.json()).toEqual({ error: expect.stringContaining("Refused") });
    const fine = await fetch(`${base}/people`, { method: "POST", headers: { Origin: base }, body: "x=1" });
    expect(fine.status).toBe(200);
    expect(reached).toBe(before + 1);
  });
});

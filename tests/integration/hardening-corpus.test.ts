import http from "node:http";
import type { AddressInfo } from "node:net";
import { afterEach, describe, expect, it } from "vitest";
import { safeRedirect } from "#app/auth/sign-in.server.ts";
import { outboxAllowed } from "#app/utils/env.server.ts";
import { clientAddressOf } from "#app/http/client-address.js";
import { bodyLimit, bodyLimitFor } from "#app/http/body-limit.js";
import { securityHeaders } from "#app/http/security-headers.js";

/*
 * The hardening probe's cases (issue 14), kept as a corpus so they stay fixed. The browser-level
 * cases (hostile labels, headers on the real server, sign-in with a hostile redirectTo) are in
 * tests/e2e/hardening-*.test.ts.
 */

describe("case 5: an unusable redirectTo falls back to /", () => {
  const unusable = [
    "/explore\tx",
    "/explore\nSet-Cookie: a=b",
    "/explore\r\n",
    "/карта",
    "/sites/ü",
    "/a b",
    "//evil.example",
    "/\\evil.example",
    "https://evil.example/",
    "javascript:alert(1)",
    "explore",
    "",
    "/sign-in?redirectTo=/x",
    "/sign-out",
    "/x\u0000",
    "/x\u200b",
    `/${"a".repeat(3000)}`,
  ];
  it.each(unusable)("%j → /", (to) => {
    expect(safeRedirect(to)).toBe("/");
  });
  it.each(["/", "/explore?method=radiocarbon&sort=median", "/sites/12#top", "/explore?q=%E2%80%8B"])("%j is kept", (to) => {
    expect(safeRedirect(to)).toBe(to);
  });
});

describe("case 7: the outbox opens only with the fake configured, never for a production build by default", () => {
  it.each([
    [{ NODE_ENV: "development", RESEND_API_KEY: "re_fake_dev", DEV_OUTBOX: "false" }, true],
    [{ NODE_ENV: "test", RESEND_API_KEY: "re_fake_x", DEV_OUTBOX: "false" }, true],
    [{ NODE_ENV: "development", RESEND_API_KEY: "re_live_123", DEV_OUTBOX: "false" }, false],
    [{ NODE_ENV: "development", RESEND_API_KEY: "re_live_123", DEV_OUTBOX: "true" }, false],
    [{ NODE_ENV: "production", RESEND_API_KEY: "re_fake_x", DEV_OUTBOX: "false" }, false],
    [{ NODE_ENV: "production", RESEND_API_KEY: "re_live_123", DEV_OUTBOX: "true" }, false],
    [{ NODE_ENV: "production", RESEND_API_KEY: "re_fake_demo", DEV_OUTBOX: "true" }, true],
  ] as const)("%j → %s", (e, open) => {
    expect(outboxAllowed(e)).toBe(open);
  });
});

describe("case 6: behind a trusted proxy the address is the one the proxy appended", () => {
  it("takes the last X-Forwarded-For entry, not the client-written first", () => {
    expect(clientAddressOf({ forwardedFor: "6.6.6.6, 203.0.113.9", socketAddress: "10.0.0.1", trustProxy: true })).toBe(
      "203.0.113.9",
    );
    expect(clientAddressOf({ forwardedFor: ["6.6.6.6", "198.51.100.4"], socketAddress: "10.0.0.1", trustProxy: true })).toBe(
      "198.51.100.4",
    );
  });
  it("ignores the header without a trusted proxy, and an empty one", () => {
    expect(clientAddressOf({ forwardedFor: "6.6.6.6", socketAddress: "10.0.0.1", trustProxy: false })).toBe("10.0.0.1");
    expect(clientAddressOf({ forwardedFor: " , ", socketAddress: "10.0.0.1", trustProxy: true })).toBe("10.0.0.1");
  });
});

// ---------------------------------------------------------------- HTTP-level cases on a small server
let server: http.Server | undefined;
afterEach(async () => {
  await new Promise((r) => (server ? server.close(r) : r(null)));
  server = undefined;
});

async function listen(handler: http.RequestListener): Promise<number> {
  server = http.createServer(handler);
  await new Promise<void>((r) => server!.listen(0, "127.0.0.1", () => r()));
  return (server!.address() as AddressInfo).port;
}

/** Sends `total` bytes in 64 KB chunks without a Content-Length (chunked), as slowly as the socket allows. */
function postChunked(port: number, path: string, total: number): Promise<{ status: number; body: string }> {
  return new Promise((resolve, reject) => {
    const req = http.request({ host: "127.0.0.1", port, path, method: "POST", headers: { "Content-Type": "text/plain" } });
    req.on("response", (res) => {
      let body = "";
      res.on("data", (d) => (body += d));
      res.on("end", () => resolve({ status: res.statusCode!, body }));
    });
    req.on("error", reject);
    const chunk = Buffer.alloc(64 * 1024, 97);
    let sent = 0;
    const pump = () => {
      while (sent < total) {
        sent += chunk.length;
        if (!req.write(chunk)) return void req.once("drain", pump);
      }
      req.end();
    };
    pump();
  });
}

describe("case 9: body limits are enforced while streaming", () => {
  it("gives each kind of path its own limit", () => {
    const o = { uploadMaxBytes: 10 * 1024 * 1024 };
    expect(bodyLimitFor("/sign-in", o)).toBeLessThanOrEqual(16 * 1024);
    expect(bodyLimitFor("/uploads", o)).toBeGreaterThan(o.uploadMaxBytes);
    expect(bodyLimitFor("/api/v1/uploads", o)).toBeGreaterThan(o.uploadMaxBytes);
    expect(bodyLimitFor("/account", o)).toBeLessThan(o.uploadMaxBytes);
  });

  it("a chunked 40 MB post to /sign-in is refused with 413 after reading little more than the limit", async () => {
    let handed = 0;
    const limiter = bodyLimit({ uploadMaxBytes: 1024 * 1024 });
    const port = await listen((req, res) => {
      limiter(req, res, () => {
        const body = (req as typeof req & { limitedBody: NodeJS.ReadableStream }).limitedBody;
        body.on("data", (d: Buffer) => (handed += d.length));
        body.on("end", () => res.end("read it all"));
        body.on("error", () => {});
      });
    });
    const answer = await postChunked(port, "/sign-in", 40 * 1024 * 1024);
    expect(answer.status).toBe(413);
    expect(answer.body).toMatch(/too large/);
    expect(handed).toBeLessThanOrEqual(16 * 1024);
  });

  it("a declared Content-Length over the limit is refused before reading", async () => {
    let called = false;
    const limiter = bodyLimit({ uploadMaxBytes: 1024 * 1024 });
    const port = await listen((req, res) => limiter(req, res, () => ((called = true), res.end())));
    const res = await fetch(`http://127.0.0.1:${port}/api/v1/determinations`, {
      method: "POST",
      body: Buffer.alloc(9 * 1024 * 1024),
    }).catch((e: unknown) => e);
    expect(res).toBeInstanceOf(Response);
    expect((res as Response).status).toBe(413);
    expect(((await (res as Response).json()) as { error: string }).error).toMatch(/too large/);
    expect(called).toBe(false);
  });

  it("a body within the limit reaches the handler whole", async () => {
    const limiter = bodyLimit({ uploadMaxBytes: 1024 * 1024 });
    const port = await listen((req, res) =>
      limiter(req, res, () => {
        let n = 0;
        const body = (req as typeof req & { limitedBody: NodeJS.ReadableStream }).limitedBody;
        body.on("data", (d: Buffer) => (n += d.length));
        body.on("end", () => res.end(String(n)));
      }),
    );
    const answer = await postChunked(port, "/account", 512 * 1024);
    expect(answer).toEqual({ status: 200, body: String(512 * 1024) });
  });
});

describe("case 2: security headers", () => {
  async function headersOf(options: Parameters<typeof securityHeaders>[0], requestHeaders: Record<string, string> = {}) {
    const mw = securityHeaders(options);
    const port = await listen((req, res) => mw(req, res, () => res.end("ok")));
    const res = await fetch(`http://127.0.0.1:${port}/`, { headers: requestHeaders });
    return res.headers;
  }

  it("a CSP with a fresh nonce for scripts and no unsafe-inline for them; no framing; nosniff; referrer policy", async () => {
    const a = await headersOf({});
    const b = await headersOf({});
    const csp = a.get("content-security-policy")!;
    const nonce = /script-src 'self' 'nonce-([A-Za-z0-9+/=]{20,})'/.exec(csp)?.[1];
    expect(nonce).toBeDefined();
    expect(b.get("content-security-policy")).not.toContain(nonce);
    const scriptSrc = csp.split(";").find((d) => d.trim().startsWith("script-src "))!;
    expect(scriptSrc).not.toContain("unsafe-inline");
    expect(csp).toContain("frame-ancestors 'none'");
    expect(csp).toContain("object-src 'none'");
    expect(a.get("x-frame-options")).toBe("DENY");
    expect(a.get("x-content-type-options")).toBe("nosniff");
    expect(a.get("referrer-policy")).toBe("same-origin");
    expect(a.get("strict-transport-security")).toBeNull();
  });

  it("HSTS only when the answer goes out over HTTPS (here: through a trusted proxy)", async () => {
    expect((await headersOf({ trustProxy: true }, { "X-Forwarded-Proto": "https" })).get("strict-transport-security")).toMatch(
      /max-age=\d+/,
    );
    expect(
      (await headersOf({ trustProxy: false }, { "X-Forwarded-Proto": "https" })).get("strict-transport-security"),
    ).toBeNull();
  });
});

// @ts-check
/*
 * The one origin check for every request that can change something (any method but GET, HEAD,
 * OPTIONS), pages and resource routes alike. It runs in front of React Router — in server.js for
 * the production server and as a Vite plugin for the dev server — so a cross-origin write is
 * answered 403 before any action runs. Plain JavaScript because server.js runs without a
 * TypeScript loader; types are in origin-guard.d.ts. See docs/decisions (origin check).
 */

const SAFE_METHODS = new Set(["GET", "HEAD", "OPTIONS"]);

/** @param {Record<string, string | string[] | undefined> | Headers} headers @param {string} name */
function header(headers, name) {
  if (typeof (/** @type {Headers} */ (headers).get) === "function") {
    return /** @type {Headers} */ (headers).get(name) ?? undefined;
  }
  const value = /** @type {Record<string, string | string[] | undefined>} */ (headers)[name.toLowerCase()];
  return Array.isArray(value) ? value[0] : value;
}

/** @param {string} value */
function hostOf(value) {
  try {
    return new URL(value).host.toLowerCase();
  } catch {
    return null;
  }
}

/**
 * Why this request must be refused, or null when it may go on.
 * @param {{ method: string; headers: Record<string, string | string[] | undefined> | Headers; appUrl?: string; trustProxy?: boolean }} request
 * @returns {string | null}
 */
export function crossOriginRefusal({ method, headers, appUrl, trustProxy }) {
  if (SAFE_METHODS.has(method.toUpperCase())) return null;

  // Scripts using a personal API token carry no cookies, so nothing ambient can be abused.
  const authorization = header(headers, "authorization") ?? "";
  if (/^Bearer\s+\S+/i.test(authorization) && !header(headers, "cookie")) return null;

  /** @type {Set<string>} */
  const ownHosts = new Set();
  const host = header(headers, "host");
  if (host) ownHosts.add(host.toLowerCase());
  const forwardedHost = trustProxy ? header(headers, "x-forwarded-host") : undefined;
  if (forwardedHost) ownHosts.add(forwardedHost.split(",")[0].trim().toLowerCase());
  const appHost = appUrl ? hostOf(appUrl) : null;
  if (appHost) ownHosts.add(appHost);

  const origin = header(headers, "origin");
  if (origin !== undefined) {
    if (origin === "null") return "The request came from an opaque origin.";
    const originHost = hostOf(origin);
    if (!originHost || !ownHosts.has(originHost)) return `The request came from another site (${origin}).`;
    return null;
  }

  // Browsers send Origin with every POST; these cover older ones.
  const fetchSite = header(headers, "sec-fetch-site");
  if (fetchSite) {
    return fetchSite === "same-origin" || fetchSite === "none" ? null : `The request came from another site (${fetchSite}).`;
  }
  const referer = header(headers, "referer");
  if (referer) {
    const refererHost = hostOf(referer);
    return refererHost && ownHosts.has(refererHost) ? null : "The request came from another site (referer).";
  }
  // No browser signal at all: a command-line client, which cannot carry a visitor's cookies.
  return null;
}

/**
 * Connect/Express middleware form, used by server.js and the Vite dev server.
 * @param {{ appUrl?: string; trustProxy?: boolean }} [options]
 * @returns {(req: import("node:http").IncomingMessage, res: import("node:http").ServerResponse, next: () => void) => void}
 */
export function originGuard(options = {}) {
  return (req, res, next) => {
    const reason = crossOriginRefusal({
      method: req.method ?? "GET",
      headers: req.headers,
      appUrl: options.appUrl,
      trustProxy: options.trustProxy,
    });
    if (!reason) return next();
    const isApi = (req.url ?? "").startsWith("/api/");
    const body = isApi
      ? JSON.stringify({ error: `Refused: ${reason}` })
      : `Refused: ${reason} Changes are only accepted from Thawline's own pages.`;
    res.writeHead(403, {
      "Content-Type": isApi ? "application/json; charset=utf-8" : "text/plain; charset=utf-8",
      "Content-Length": Buffer.byteLength(body),
      "Cache-Control": "no-store",
    });
    res.end(body);
  };
}

// @ts-check
/*
 * Security headers for every answer (pages, resource routes, static files), through helmet.
 * Scripts: only our own files and inline scripts carrying this request's nonce (React Router's
 * hydration data and scroll restoration); no 'unsafe-inline' for scripts. Styles: our own
 * stylesheets; inline style *attributes* are allowed (style-src-attr) because React's `style`
 * props and the map's popups render them — a style attribute cannot run script. No page may be
 * framed. HSTS only on answers that went out over HTTPS. See docs/decisions/ (security headers).
 */
import crypto from "node:crypto";
import helmet from "helmet";

/** @param {import("node:http").IncomingMessage} req @param {boolean} trustProxy */
function overHttps(req, trustProxy) {
  if (/** @type {import("node:tls").TLSSocket} */ (req.socket).encrypted) return true;
  if (!trustProxy) return false;
  const proto = String(req.headers["x-forwarded-proto"] ?? "")
    .split(",")
    .pop()
    ?.trim()
    .toLowerCase();
  return proto === "https";
}

/**
 * Express/Connect middleware: makes a fresh nonce (res.locals.cspNonce) and sets the headers.
 * With `scripts: false` (the Vite dev server, whose injected inline scripts carry no nonce) the
 * policy only forbids framing and plugins; every other header is the same.
 * @param {{ trustProxy?: boolean; scripts?: boolean }} [options]
 */
export function securityHeaders(options = {}) {
  const trustProxy = options.trustProxy ?? false;
  const strict = options.scripts !== false;
  /** @type {(req: any, res: any) => string} */
  const nonce = (_req, res) => `'nonce-${res.locals.cspNonce}'`;
  const directives = strict
    ? {
        defaultSrc: ["'self'"],
        scriptSrc: ["'self'", nonce],
        scriptSrcAttr: ["'none'"],
        styleSrc: ["'self'"],
        styleSrcAttr: ["'unsafe-inline'"],
        imgSrc: ["'self'", "data:", "blob:"],
        fontSrc: ["'self'", "data:"],
        connectSrc: ["'self'"],
        frameSrc: ["'self'"],
        objectSrc: ["'none'"],
        baseUri: ["'self'"],
        formAction: ["'self'"],
        frameAncestors: ["'none'"],
      }
    : {
        // helmet refuses a policy without default-src unless told this is meant.
        defaultSrc: helmet.contentSecurityPolicy.dangerouslyDisableDefaultSrc,
        frameAncestors: ["'none'"],
        objectSrc: ["'none'"],
      };
  const headers = helmet({
    contentSecurityPolicy: { useDefaults: false, directives },
    strictTransportSecurity: false,
    xFrameOptions: { action: "deny" },
    referrerPolicy: { policy: "same-origin" },
    crossOriginEmbedderPolicy: false,
  });
  const hsts = helmet.strictTransportSecurity({ maxAge: 365 * 24 * 60 * 60, includeSubDomains: true });
  /** @type {(req: import("node:http").IncomingMessage, res: any, next: (err?: unknown) => void) => void} */
  return (req, res, next) => {
    res.locals ??= {};
    res.locals.cspNonce = crypto.randomBytes(16).toString("base64");
    headers(req, res, (/** @type {unknown} */ err) => {
      if (err) return next(err);
      if (overHttps(req, trustProxy)) return hsts(req, res, next);
      next();
    });
  };
}

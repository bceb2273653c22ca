// @ts-check
/*
 * The bridge from Express to React Router, in place of @react-router/express, so that the request
 * body is the size-limited stream (body-limit.js), the CSP nonce reaches the render through the
 * load context, and the answer is piped with back-pressure (one 'drain' listener per answer, which
 * also ends the MaxListenersExceededWarning the compression middleware used to provoke).
 */
import { Readable } from "node:stream";
import { pipeline } from "node:stream/promises";
import { createRequestHandler, RouterContextProvider } from "react-router";
import { refusedBodies } from "./body-limit.js";

/**
 * @param {import("express").Request & { limitedBody?: Readable }} req
 * @param {import("express").Response} res
 */
function toRequest(req, res) {
  const url = new URL(`${req.protocol}://${req.get("host") ?? "localhost"}${req.originalUrl}`);
  const headers = new Headers();
  for (const [key, value] of Object.entries(req.headers)) {
    if (Array.isArray(value)) value.forEach((v) => headers.append(key, v));
    else if (value !== undefined) headers.set(key, value);
  }
  /** @type {AbortController | null} */
  let controller = new AbortController();
  res.on("finish", () => (controller = null));
  res.on("close", () => controller?.abort());
  /** @type {RequestInit & { duplex?: "half" }} */
  const init = { method: req.method, headers, signal: controller.signal };
  if (req.method !== "GET" && req.method !== "HEAD") {
    init.body = /** @type {ReadableStream} */ (Readable.toWeb(req.limitedBody ?? req));
    init.duplex = "half";
  }
  return new Request(url.href, init);
}

/** @param {import("express").Response} res @param {Response} response */
async function send(res, response) {
  // Already answered (a body over its limit gets its 413 from body-limit.js while React Router reads).
  if (res.destroyed || res.writableEnded || refusedBodies.has(res)) {
    await response.body?.cancel().catch(() => {});
    return;
  }
  res.statusMessage = response.statusText;
  res.status(response.status);
  for (const [key, value] of response.headers.entries()) res.append(key, value);
  if (!response.body) return void res.end();
  if (response.headers.get("Content-Type")?.includes("text/event-stream")) res.flushHeaders();
  try {
    await pipeline(Readable.fromWeb(/** @type {any} */ (response.body)), res);
  } catch (error) {
    if (!(res.destroyed || res.writableEnded)) throw error;
  }
}

/**
 * @param {{ build: any; mode?: string }} options
 * @returns {import("express").RequestHandler}
 */
export function reactRouterHandler({ build, mode }) {
  const handle = createRequestHandler(build, mode);
  return async (req, res, next) => {
    try {
      // With React Router's middleware (future.v8_middleware) the load context must be a
      // RouterContextProvider; the nonce rides on it as a plain property, read by entry.server.tsx.
      // The lane key (page-lane.js) lets a kept answer leave a lane for the next same request.
      const context = Object.assign(new RouterContextProvider(), {
        cspNonce: res.locals.cspNonce,
        laneKey: res.locals.laneKey,
      });
      const response = await handle(toRequest(req, res), context);
      await send(res, response);
    } catch (error) {
      if (refusedBodies.has(res)) return; // answered already: a 413, its connection still lingering
      next(error);
    }
  };
}

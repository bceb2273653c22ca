// @ts-check
/*
 * Request bodies are limited while they stream in, not by trusting Content-Length: past the limit
 * the server stops reading, answers 413 and closes the connection. The limit depends on the path:
 * uploads may be as large as UPLOAD_MAX_BYTES, the JSON API a few megabytes, ordinary forms (and
 * the public sign-in form above all) very little.
 */
import { Transform } from "node:stream";

const KiB = 1024;
const MiB = 1024 * KiB;

/**
 * @param {string} pathname
 * @param {{ uploadMaxBytes: number; modelRunMaxBytes?: number; modelRunBatchMaxBytes?: number }} options
 * @returns {number} the largest body accepted for this path, in bytes
 */
export function bodyLimitFor(pathname, { uploadMaxBytes, modelRunMaxBytes = 512 * MiB, modelRunBatchMaxBytes = 2048 * MiB }) {
  if (pathname === "/sign-in" || pathname.startsWith("/sign-in/") || pathname === "/sign-out") return 16 * KiB;
  // Model runs: one file through the API, an ensemble of files on the /runs page (each file is
  // held to MODEL_RUN_MAX_BYTES by the file intake as it streams in).
  if (pathname === "/api/v1/model-runs") return modelRunMaxBytes + 64 * KiB;
  if (pathname === "/runs") return modelRunBatchMaxBytes + 64 * KiB;
  // Multipart framing adds a little to the file itself. Editors' file forms (a curve, a margin
  // reconstruction) check their own, smaller, limits once the body is in.
  if (
    pathname === "/uploads" ||
    pathname.startsWith("/uploads/") ||
    pathname.startsWith("/api/v1/uploads") ||
    pathname === "/curves" ||
    pathname === "/checks"
  ) {
    return uploadMaxBytes + 64 * KiB;
  }
  if (pathname.startsWith("/api/v1/") || pathname.startsWith("/calibrate")) return 8 * MiB;
  return 1 * MiB;
}

export class BodyTooLarge extends Error {
  /** @param {number} limit */
  constructor(limit) {
    super(`The request body is larger than ${limit} bytes.`);
    this.name = "BodyTooLarge";
    this.limit = limit;
  }
}

/**
 * @param {import("node:http").IncomingMessage} req
 * @param {import("node:http").ServerResponse} res
 * @param {number} limit
 */
function refuse(req, res, limit) {
  if (res.headersSent) return;
  const isApi = (req.url ?? "").startsWith("/api/");
  const message = `The request is too large: at most ${Math.round(limit / KiB)} KB may be sent here.`;
  const body = isApi ? JSON.stringify({ error: message }) : message;
  res.writeHead(413, {
    "Content-Type": isApi ? "application/json; charset=utf-8" : "text/plain; charset=utf-8",
    "Content-Length": Buffer.byteLength(body),
    Connection: "close",
    "Cache-Control": "no-store",
  });
  res.end(body);
  // Stop reading; give the client a moment to read the answer, then drop the connection.
  req.pause();
  const timer = setTimeout(() => req.socket.destroy(), 2000);
  timer.unref();
  req.socket.once("close", () => clearTimeout(timer));
}

/** @param {string | undefined} url */
const pathnameOf = (url) => (url ?? "/").split("?")[0] ?? "/";

/**
 * Middleware. A declared Content-Length over the limit is refused before reading. Otherwise the
 * body is counted as it streams: the handler reads `req.limitedBody` (set here) instead of `req`.
 * With `streaming: false` (the Vite dev server, whose handler reads `req` itself) only the
 * declared length is checked.
 * @param {{ uploadMaxBytes: number; modelRunMaxBytes?: number; modelRunBatchMaxBytes?: number; streaming?: boolean }} options
 */
export function bodyLimit(options) {
  /** @type {(req: import("node:http").IncomingMessage & { limitedBody?: import("node:stream").Readable }, res: import("node:http").ServerResponse, next: () => void) => void} */
  return (req, res, next) => {
    if (req.method === "GET" || req.method === "HEAD" || req.method === "OPTIONS") return next();
    const limit = bodyLimitFor(pathnameOf(req.url), options);
    const declared = Number(req.headers["content-length"]);
    if (Number.isFinite(declared) && declared > limit) return refuse(req, res, limit);
    if (options.streaming === false) return next();
    let seen = 0;
    const counter = new Transform({
      transform(chunk, _encoding, callback) {
        seen += chunk.length;
        if (seen > limit) {
          refuse(req, res, limit);
          req.unpipe(counter);
          return callback(new BodyTooLarge(limit));
        }
        callback(null, chunk);
      },
    });
    req.pipe(counter);
    req.limitedBody = counter;
    next();
  };
}

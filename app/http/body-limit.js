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

/** Answers already given a 413 by this module (their handler has nothing to add, and must not close them early). */
export const refusedBodies = new WeakSet();

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
  refusedBodies.add(res);
  const isApi = (req.url ?? "").startsWith("/api/");
  const message = `The request is too large: at most ${Math.round(limit / KiB)} KB may be sent here.`;
  const body = isApi ? JSON.stringify({ error: message }) : message;
  res.writeHead(413, {
    "Content-Type": isApi ? "application/json; charset=utf-8" : "text/plain; charset=utf-8",
    "Content-Length": Buffer.byteLength(body),
    Connection: "close",
    "Cache-Control": "no-store",
  });
  // The whole answer goes out now (Content-Length), but the connection is closed only after a
  // moment of reading and discarding what the client is still sending ("lingering close"): closing
  // a socket with unread bytes resets it, and a reset can reach the client before it has read the
  // 413, which it would then never see. At most LINGER_MS or LINGER_BYTES, then the connection ends.
  res.write(body);
  let drained = 0;
  const end = () => {
    clearTimeout(timer);
    req.off("data", discard);
    if (!res.writableEnded) res.end();
  };
  /** @param {Buffer} chunk */
  const discard = (chunk) => {
    drained += chunk.length;
    if (drained > LINGER_BYTES) end();
  };
  const timer = setTimeout(end, LINGER_MS);
  req.on("data", discard);
  req.once("end", end);
  req.socket.once("close", () => clearTimeout(timer));
  req.resume();
}

const LINGER_MS = 1000;
const LINGER_BYTES = 8 * MiB;

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
          req.unpipe(counter);
          refuse(req, res, limit);
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

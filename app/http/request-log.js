// @ts-check
/*
 * One JSON line per request when its answer is finished: time, method, path (without the query,
 * which may carry addresses), status, duration. Errors are logged where they happen (logError),
 * with their stack; an ordinary 404 is just its request line.
 */

/** @param {Record<string, unknown>} fields */
export function logLine(fields) {
  process.stdout.write(`${JSON.stringify({ time: new Date().toISOString(), ...fields })}\n`);
}

/** @param {unknown} error @param {Record<string, unknown>} [fields] */
export function logError(error, fields = {}) {
  const e = error instanceof Error ? error : new Error(String(error));
  process.stderr.write(
    `${JSON.stringify({ time: new Date().toISOString(), level: "error", ...fields, error: e.message, stack: e.stack })}\n`,
  );
}

export function requestLog() {
  /** @type {(req: import("node:http").IncomingMessage, res: import("node:http").ServerResponse, next: () => void) => void} */
  return (req, res, next) => {
    const start = process.hrtime.bigint();
    let logged = false;
    const done = () => {
      if (logged) return;
      logged = true;
      const ms = Number(process.hrtime.bigint() - start) / 1e6;
      logLine({
        level: res.statusCode >= 500 ? "error" : "info",
        method: req.method,
        path: (req.url ?? "/").split("?")[0],
        status: res.writableFinished ? res.statusCode : 499,
        ms: Math.round(ms * 10) / 10,
      });
    };
    res.once("finish", done);
    res.once("close", done);
    next();
  };
}

// @ts-check
/*
 * The short way to a kept page (app/utils/page-lane.server.ts): a signed-in GET for a page that
 * opted in, at an address, with a cookie and a registry state seen before, is answered here with
 * the kept page and this request's nonce — already compressed, without React Router, the
 * compression middleware or a render. Anything else goes on, carrying its lane key so that a full
 * answer can leave a lane behind. Runs after the security headers (the nonce and the policy).
 */

/** @param {string | undefined} accept */
function takesGzip(accept) {
  return typeof accept === "string" && /\bgzip\b(?!\s*;\s*q=0(\.0*)?\s*(,|$))/i.test(accept);
}

/**
 * @param {{ laneKey?: (url: string, cookie: string | undefined) => string | null;
 *   laneAnswer?: (key: string, nonce: string, gzip: boolean) => { headers: [string, string][]; body: Buffer[]; length: number } | null }} lane
 * @returns {(req: import("express").Request, res: import("express").Response, next: (err?: unknown) => void) => void}
 */
export function pageLane(lane) {
  return (req, res, next) => {
    // Pages only: not files (an extension: assets, the favicon, React Router's .data requests), not the API.
    if (!lane.laneKey || !lane.laneAnswer || req.method !== "GET" || /\.[^/]*$/.test(req.path) || req.path.startsWith("/api/")) {
      return next();
    }
    /** @type {string | null} */
    let key;
    try {
      key = lane.laneKey(req.originalUrl, req.headers.cookie);
      if (!key) return next();
      const answer = lane.laneAnswer(key, res.locals.cspNonce, takesGzip(req.headers["accept-encoding"]));
      if (!answer) {
        res.locals.laneKey = key;
        return next();
      }
      res.statusCode = 200;
      for (const [name, value] of answer.headers) res.set(name, value); // as the full answer: Express adds the charset
      res.setHeader("Content-Length", answer.length);
      res.setHeader("Server-Timing", "lane");
      res.cork();
      for (const chunk of answer.body) res.write(chunk);
      res.end();
    } catch (error) {
      next(error);
    }
  };
}

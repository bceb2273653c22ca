// @ts-check
/*
 * The client's address for rate limits, in a header of our own (X-Thawline-Client) that the app
 * reads; any incoming copy is discarded first, so it cannot be spoofed. Behind a trusted proxy the
 * address is the *last* X-Forwarded-For entry — the one that proxy appended. Earlier entries were
 * written by whoever sent the request and prove nothing.
 */

/**
 * @param {{ forwardedFor?: string | string[]; socketAddress?: string; trustProxy: boolean }} input
 * @returns {string}
 */
export function clientAddressOf({ forwardedFor, socketAddress, trustProxy }) {
  if (trustProxy && forwardedFor !== undefined) {
    const all = (Array.isArray(forwardedFor) ? forwardedFor.join(",") : forwardedFor).split(",");
    const last = all
      .map((s) => s.trim())
      .filter(Boolean)
      .pop();
    if (last) return last;
  }
  return socketAddress || "unknown";
}

/** @param {{ trustProxy: boolean }} options */
export function clientAddress(options) {
  /** @type {(req: import("node:http").IncomingMessage, res: unknown, next: () => void) => void} */
  return (req, _res, next) => {
    req.headers["x-thawline-client"] = clientAddressOf({
      forwardedFor: req.headers["x-forwarded-for"],
      socketAddress: req.socket.remoteAddress,
      trustProxy: options.trustProxy,
    });
    delete req.headers["x-forwarded-for"];
    next();
  };
}

import crypto from "node:crypto";
import type { EntryContext } from "react-router";
import { getDb } from "#app/db/client.server.ts";
import { sessionStillFor } from "#app/auth/session.server.ts";
import { dataVersion } from "#app/models/registry/read-cache.server.ts";
import { keptBody } from "#app/utils/page-memo.server.ts";

/*
 * The short way to a kept page (page-memo.server.ts), before React Router runs at all.
 *
 * A page opts in when what it shows is a function of its address, the person signed in and the
 * registry alone: its loaders read nothing that changes without moving the registry's counter
 * (registry_version) — no clock, no jobs' progress, no audit trail, nothing held in memory. Explore
 * is such a page. For those, a full answer (every loader run, its access check first) leaves a
 * lane behind, keyed by
 *   - the address (path and query),
 *   - the whole Cookie header (the signed session cookie exactly as it was checked, and the absence
 *     of a flash message: an answer that clears one sets a cookie and is never laned),
 *   - the registry's counter read before the loaders ran.
 * A later request with the same three gets the kept page with its own nonce, after one more check:
 * the session is still open and still that person's (signing out, expiry and deactivation end it).
 * Any write to the registry moves the counter, so no lane outlives the data it showed.
 */

/** What a route module exports to opt in: `export const handle = { fastLane: true }`. */
export type LaneHandle = { fastLane: true };

type Lane = { memoKey: string; sessionId: string; userId: number; headers: [string, string][] };

const MAX_LANES = 2_000;
const lanes = new Map<string, Lane>();

/** The lane key of a request that may take the lane, or null (no cookie: nobody signed in). */
export function laneKey(url: string, cookie: string | undefined): string | null {
  if (!cookie) return null;
  return crypto
    .createHash("sha256")
    .update(url)
    .update("\n")
    .update(cookie)
    .update("\n")
    .update(dataVersion(getDb()))
    .digest("base64url");
}

export type LaneAnswer = { headers: [string, string][]; body: Buffer[]; length: number };

/** The kept page for this lane with `nonce` written in, gzip-encoded when the client takes gzip; null when there is none. */
export function laneAnswer(key: string, nonce: string, gzip: boolean): LaneAnswer | null {
  const lane = lanes.get(key);
  if (!lane) return null;
  if (sessionStillFor(lane.sessionId) !== lane.userId) {
    lanes.delete(key);
    return null;
  }
  const body = keptBody(lane.memoKey, nonce, gzip);
  if (!body) {
    lanes.delete(key);
    return null;
  }
  const headers: [string, string][] = [...lane.headers, ["Vary", "Accept-Encoding"]];
  if (gzip) headers.push(["Content-Encoding", "gzip"]);
  return { headers, body, length: body.reduce((n, b) => n + b.length, 0) };
}

/**
 * After a full answer that was kept (or came from the memo): leaves a lane for the next request
 * with the same key, when the page opted in and the answer sets no cookie.
 */
export function rememberLane(
  key: string | undefined,
  memoKey: string,
  routerContext: EntryContext,
  responseHeaders: Headers,
  user: { id: number; sessionId?: string } | null,
): void {
  if (!key || !user?.sessionId || responseHeaders.has("Set-Cookie")) return;
  const matches = routerContext.staticHandlerContext.matches;
  const leaf = matches[matches.length - 1];
  const handle = leaf ? (routerContext.routeModules[leaf.route.id]?.handle as Partial<LaneHandle> | undefined) : undefined;
  if (handle?.fastLane !== true) return;
  const headers: [string, string][] = [];
  for (const [name, value] of responseHeaders) {
    if (!/^(content-length|content-encoding|vary)$/i.test(name)) headers.push([name, value]);
  }
  lanes.delete(key);
  lanes.set(key, { memoKey, sessionId: user.sessionId, userId: user.id, headers });
  if (lanes.size > MAX_LANES) lanes.delete(lanes.keys().next().value!);
}

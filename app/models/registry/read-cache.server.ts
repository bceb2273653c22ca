import type { Db } from "#app/db/client.server.ts";
import { encodedAnswer, encodedBody } from "#app/models/registry/encoded-body.server.ts";

/*
 * Registry reads that many requests repeat (the map data, Explore's default pages, the token API's
 * pages) are kept until the registry changes. "Changed" is the counter in registry_version, which
 * triggers move on every write to the registry's own tables, from any connection (the writer
 * thread, a second process): a write there empties the cache, and nothing is ever served stale.
 * Writes that do not change what the registry says (sessions, jobs' progress, rate limits, token
 * use, model runs: REGISTRY_VERSION_EXEMPT in db/schema.ts) leave it alone, so a long commit's
 * progress reports do not make every reader recompute. Callers still do their access check first.
 */

const MAX_ENTRIES = 64;
type Entry = { version: string; value: unknown };
const cache = new Map<string, Entry>();

/** Per connection: a number of its own (two databases open in one process never share entries) and the prepared query. */
const versionQueries = new WeakMap<object, { connection: number; query: { get(): unknown } }>();
let nextConnection = 1;

/** A string that differs whenever anything has been written to the registry's tables since. */
export function dataVersion(db: Db): string {
  const sqlite = db.$client;
  let known = versionQueries.get(sqlite);
  if (!known) {
    known = { connection: nextConnection++, query: sqlite.prepare("select n from registry_version where id = 1").pluck() };
    versionQueries.set(sqlite, known);
  }
  return `${known.connection}:${known.query.get() as number}`;
}

/** The value computed for `key` at this data version, computed at most once per version. */
export function cachedRead<T>(db: Db, key: string, compute: () => T): T {
  const version = dataVersion(db);
  const hit = cache.get(key);
  if (hit && hit.version === version) {
    cache.delete(key);
    cache.set(key, hit); // most recently used last
    return hit.value as T;
  }
  const value = compute();
  cache.set(key, { version, value });
  if (cache.size > MAX_ENTRIES) cache.delete(cache.keys().next().value!);
  return value;
}

/**
 * A JSON answer serialised once per data version, with its brotli/gzip encodings made once when
 * first asked for (encoded-body.server.ts) and an ETag; 304 when the client has it.
 */
export function cachedJson(db: Db, request: Request, key: string, compute: () => unknown, headers: HeadersInit = {}): Response {
  const body = cachedRead(db, `json:${key}`, () => encodedBody(Buffer.from(JSON.stringify(compute()))));
  const h = new Headers(headers);
  h.set("Content-Type", "application/json; charset=utf-8");
  return encodedAnswer(request, body, h, headers);
}

import type { Db } from "#app/db/client.server.ts";
import { encodedAnswer, encodedBody } from "#app/models/registry/encoded-body.server.ts";

/*
 * Registry reads that many requests repeat (the map data, Explore's default pages, the token API's
 * pages) are kept until the database changes. "Changed" is cheap and exact enough: SQLite's
 * data_version moves when another connection commits (a worker, a second process), and
 * total_changes() counts every row this process's own connection wrote. Any write anywhere empties
 * the cache; nothing is ever served stale. Callers still do their access check first.
 */

const MAX_ENTRIES = 64;
type Entry = { version: string; value: unknown };
const cache = new Map<string, Entry>();

const connectionIds = new WeakMap<object, number>();
let nextConnection = 1;

/** A string that differs whenever anything has been written to the database since. */
export function dataVersion(db: Db): string {
  const sqlite = db.$client;
  let connection = connectionIds.get(sqlite);
  if (!connection) connectionIds.set(sqlite, (connection = nextConnection++));
  const other = sqlite.pragma("data_version", { simple: true }) as number;
  const own = (sqlite.prepare("select total_changes() as n").get() as { n: number }).n;
  return `${connection}:${other}:${own}`;
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

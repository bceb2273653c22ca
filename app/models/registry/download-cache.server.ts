import type { Db } from "#app/db/client.server.ts";
import { encodedAnswerAsync, encodedBody, heldBytes, type EncodedBody } from "#app/models/registry/encoded-body.server.ts";
import { dataVersion } from "#app/models/registry/read-cache.server.ts";
import { ByteBoundedCache } from "#app/utils/byte-bounded-cache.ts";

/*
 * Finished downloads (a constraint selection's CSV or JSON, a release's files) kept in memory with
 * their encodings, so a download many people repeat is built once per registry version, not per
 * request. A key is the route and the query as asked; an entry is served only at the data
 * version it was made at (a release, which never changes, at any version). Bounded by total
 * bytes (least recently used go first); an answer larger than the per-entry limit is never kept
 * and streams as it always did. Callers do their access check before asking.
 */

type Entry = { version: string; body: EncodedBody; headers: [string, string][] };

const MB = 1024 * 1024;
const limits = { maxBytes: 64 * MB, maxEntryBytes: 16 * MB };
const entries = new ByteBoundedCache<Entry>({ maxBytes: limits.maxBytes });
const inflight = new Map<string, Promise<Entry | null>>();

/** Sets the bounds (tests use small ones); entries over the new bound go at once. */
export function setDownloadCacheLimits(next: Partial<typeof limits>) {
  Object.assign(limits, next);
  entries.setLimits({ maxBytes: limits.maxBytes });
}

/** Drops every kept download. */
export function clearDownloadCache() {
  entries.clear();
  oversized.clear();
}

/** What the cache holds now: keys (least recently used first) and total bytes. */
export function downloadCacheState(): { keys: string[]; bytes: number } {
  return { keys: entries.keys(), bytes: entries.bytes };
}

/** The entry held for `key` at this version (now the most recently used), if any. */
function fresh(key: string, version: string): Entry | undefined {
  return entries.peek(key)?.version === version ? entries.get(key) : undefined;
}

/** An encoding added to an entry's body is counted while the entry is still held. */
const answerFrom = (request: Request, key: string, entry: Entry) =>
  encodedAnswerAsync(request, entry.body, entry.headers, (bytes) => entries.grow(key, entry, bytes));

type Collected = { whole: Buffer } | { head: Uint8Array[]; rest: ReadableStreamDefaultReader<Uint8Array> };

/**
 * Reads a produced body here, not at the client's pace (a client that goes away cannot leave the
 * others waiting): whole when it ends within the per-entry limit, else what was read so far and
 * the reader of the rest.
 */
async function collect(source: ReadableStream<Uint8Array>): Promise<Collected> {
  const reader = source.getReader();
  const chunks: Uint8Array[] = [];
  let size = 0;
  for (;;) {
    const next = await reader.read();
    if (next.done) return { whole: Buffer.concat(chunks, size) };
    chunks.push(next.value);
    size += next.value.byteLength;
    if (size > limits.maxEntryBytes) return { head: chunks, rest: reader };
  }
}

/** The chunks already read, then the rest of the body as the client reads it. */
function continued(head: Uint8Array[], rest: ReadableStreamDefaultReader<Uint8Array>): ReadableStream<Uint8Array> {
  return new ReadableStream<Uint8Array>({
    async pull(controller) {
      const chunk = head.shift();
      if (chunk) return controller.enqueue(chunk);
      const next = await rest.read();
      if (next.done) controller.close();
      else controller.enqueue(next.value);
    },
    cancel: (reason) => rest.cancel(reason),
  });
}

/** Keys found too large to keep at a version (they stream without being read twice); a few hundred at most. */
const oversized = new Set<string>();
function markOversized(id: string) {
  if (oversized.size >= 256) oversized.clear();
  oversized.add(id);
}

/**
 * The download `key` (route and query as asked; the same key must always mean the same bytes and
 * headers at one data version): from memory when held at the current version, else `produce`d,
 * read whole and kept. Requests for the same key meanwhile wait for it instead of producing it
 * again. An answer larger than the per-entry limit streams to its client as it is read.
 * `immutable`: the answer never changes (a published release), so any version will do.
 */
export async function cachedDownload(
  db: Db,
  request: Request,
  key: string,
  produce: () => Response | Promise<Response>,
  options: { immutable?: boolean } = {},
): Promise<Response> {
  const version = options.immutable ? "immutable" : dataVersion(db);
  const id = `${version}\n${key}`;
  const found = fresh(key, version) ?? (await inflight.get(id));
  if (found) return answerFrom(request, key, found);
  if (oversized.has(id)) return produce();
  let settle!: (entry: Entry | null) => void;
  const promise = new Promise<Entry | null>((resolve) => (settle = resolve));
  inflight.set(id, promise);
  try {
    const response = await produce();
    if (response.status !== 200 || !response.body || response.headers.has("Content-Encoding")) {
      settle(null);
      return response;
    }
    const collected = await collect(response.body);
    if ("head" in collected) {
      markOversized(id);
      settle(null);
      const { status, headers } = response;
      return new Response(continued(collected.head, collected.rest), { status, headers });
    }
    const body = encodedBody(collected.whole);
    const headers = [...response.headers.entries()].filter(([name]) => name !== "content-length");
    const entry: Entry = { version, body, headers };
    entries.set(key, entry, heldBytes(body));
    settle(entry);
    return answerFrom(request, key, entry);
  } catch (error) {
    settle(null);
    throw error;
  } finally {
    if (inflight.get(id) === promise) inflight.delete(id);
  }
}

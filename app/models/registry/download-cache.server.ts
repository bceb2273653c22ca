import type { Db } from "#app/db/client.server.ts";
import { encodedAnswerAsync, encodedBody, heldBytes, type EncodedBody } from "#app/models/registry/encoded-body.server.ts";
import { dataVersion } from "#app/models/registry/read-cache.server.ts";

/*
 * Finished downloads (a constraint selection's CSV or JSON, a release's files) kept in memory with
 * their encodings, so a download many people repeat is built once per registry version, not per
 * request. A key is the route and the query as asked; an entry is served only at the data
 * version it was made at (a release, which never changes, at any version). The first answer
 * streams to its client as it always did and is kept on the side when it ends; requests for the
 * same key meanwhile wait for it instead of building it again. Bounded by total bytes (least
 * recently used go first); an answer larger than the per-entry limit is never kept. Callers do
 * their access check before asking.
 */

type Entry = { version: string; body: EncodedBody; headers: [string, string][]; bytes: number };

const MB = 1024 * 1024;
const limits = { maxBytes: 64 * MB, maxEntryBytes: 16 * MB };
const entries = new Map<string, Entry>();
const inflight = new Map<string, Promise<Entry | null>>();
let held = 0;

/** Sets the bounds (tests use small ones); entries over the new bound go at once. */
export function setDownloadCacheLimits(next: Partial<typeof limits>) {
  Object.assign(limits, next);
  evict();
}

/** Drops every kept download. */
export function clearDownloadCache() {
  entries.clear();
  held = 0;
}

/** What the cache holds now: keys (least recently used first) and total bytes. */
export function downloadCacheState(): { keys: string[]; bytes: number } {
  return { keys: [...entries.keys()], bytes: held };
}

function evict() {
  while (held > limits.maxBytes && entries.size > 0) {
    const [key, entry] = entries.entries().next().value!;
    entries.delete(key);
    held -= entry.bytes;
  }
}

function store(key: string, entry: Entry) {
  const old = entries.get(key);
  if (old) held -= old.bytes;
  entries.delete(key);
  entries.set(key, entry);
  held += entry.bytes;
  evict();
}

/** An encoding was added to an entry's body: count it while the entry is still held. */
function grew(key: string, entry: Entry, bytes: number) {
  if (entries.get(key) !== entry) return;
  entry.bytes += bytes;
  held += bytes;
  evict();
}

function fresh(key: string, version: string): Entry | undefined {
  const entry = entries.get(key);
  if (!entry || entry.version !== version) return undefined;
  entries.delete(key);
  entries.set(key, entry); // most recently used last
  return entry;
}

const answerFrom = (request: Request, key: string, entry: Entry) =>
  encodedAnswerAsync(request, entry.body, entry.headers, (bytes) => grew(key, entry, bytes));

/**
 * Passes a produced body through to its client, keeping a copy; when it ends whole and within the
 * per-entry limit, the copy becomes the entry for `key` at `version`.
 */
function kept(source: ReadableStream<Uint8Array>, key: string, version: string, headers: Headers): ReadableStream<Uint8Array> {
  const reader = source.getReader();
  const id = `${version}\n${key}`;
  let settle!: (entry: Entry | null) => void;
  const promise = new Promise<Entry | null>((resolve) => (settle = resolve));
  inflight.set(id, promise);
  let chunks: Uint8Array[] | null = [];
  let size = 0;
  const finish = (entry: Entry | null) => {
    chunks = null;
    if (inflight.get(id) === promise) inflight.delete(id);
    settle(entry);
  };
  return new ReadableStream<Uint8Array>({
    async pull(controller) {
      let next: ReadableStreamReadResult<Uint8Array>;
      try {
        next = await reader.read();
      } catch (error) {
        finish(null);
        throw error;
      }
      if (next.done) {
        controller.close();
        if (!chunks) return;
        const body = encodedBody(Buffer.concat(chunks, size));
        const entry: Entry = { version, body, bytes: heldBytes(body), headers: [...headers.entries()] };
        store(key, entry);
        finish(entry);
        return;
      }
      if (chunks) {
        size += next.value.byteLength;
        if (size > limits.maxEntryBytes) finish(null);
        else chunks.push(next.value);
      }
      controller.enqueue(next.value);
    },
    cancel(reason) {
      finish(null);
      return reader.cancel(reason);
    },
  });
}

/**
 * The download `key` (route and query as asked; the same key must always mean the same bytes and
 * headers at one data version): from memory when held at the current version, else `produce`d.
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
  const found = fresh(key, version) ?? (await inflight.get(`${version}\n${key}`));
  if (found) return answerFrom(request, key, found);
  const response = await produce();
  if (response.status !== 200 || !response.body || response.headers.has("Content-Encoding")) return response;
  return new Response(kept(response.body, key, version, response.headers), {
    status: response.status,
    headers: response.headers,
  });
}

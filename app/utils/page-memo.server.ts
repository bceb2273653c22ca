import crypto from "node:crypto";
import { ByteBoundedCache } from "#app/utils/byte-bounded-cache.ts";
import { deflatePiece, splicedGzip, type DeflatedPiece } from "#app/utils/spliced-gzip.server.ts";

/*
 * Rendering a page is a pure function of its URL and what its loaders returned: the same loader
 * data at the same address gives the same HTML, apart from this request's CSP nonce. So the HTML
 * of a finished render is kept, keyed by the URL and a hash of the loader data, and a request whose
 * loaders returned exactly the same data is answered with that HTML and its own nonce written in.
 *
 * Nothing is skipped that decides access or content: every loader (with its access check first)
 * has run before this is consulted, and their data is the key. Two people share an entry only if
 * every loader gave both the same data (the root loader's data names the person, so in practice
 * an entry is one person's). A write to the registry changes the loader data, so the next render
 * is fresh. Not kept: error renders, statuses other than 200, action answers, deferred (promise)
 * data, renders without a nonce (the development server).
 */

const MAX_ENTRIES = 256;
const MAX_BYTES = 48 * 1024 * 1024;
/** Kept pieces at least this long are sent as they are; shorter ones are joined with their neighbours. */
const SMALL_PIECE = 16 * 1024;

/**
 * The page cut at each place its nonce stood, as UTF-8 bytes (a Buffer body spares the per-answer
 * string check), and the same pieces compressed once, when first asked for (spliced-gzip.server.ts).
 */
type Entry = { parts: Buffer[]; gzip?: DeflatedPiece[] };
const entries = new ByteBoundedCache<Entry>({ maxBytes: MAX_BYTES, maxEntries: MAX_ENTRIES });

export type RenderInputs = {
  url: string;
  statusCode: number;
  actionData: Record<string, unknown> | null;
  errors: Record<string, unknown> | null;
  nonce: string;
  method: string;
  /**
   * The loaders' data exactly as React Router sends it to the browser (its hydration stream), or
   * null when that stream is still waiting for deferred data.
   */
  dataText: string | null;
};

/** The key of a render that may be kept, or null when this one must not be. */
export function renderKey(inputs: RenderInputs): string | null {
  if (inputs.method !== "GET" || inputs.statusCode !== 200 || !inputs.nonce) return null;
  if (inputs.errors || inputs.actionData || inputs.dataText === null) return null;
  const { pathname, search } = new URL(inputs.url);
  return crypto
    .createHash("sha256")
    .update(pathname)
    .update("\n")
    .update(search)
    .update("\n")
    .update(inputs.dataText)
    .digest("base64url");
}

/**
 * Reads React Router's hydration stream of the loaders' data (already encoded before the render is
 * asked for) and gives back its whole text when it is complete at once, with a stream of the same
 * bytes for the render to send. Deferred data keeps the stream open: then the text is null (that
 * page is rendered as it streams, and not kept).
 */
export async function settledText(
  stream: ReadableStream<Uint8Array>,
): Promise<{ text: string | null; rest: ReadableStream<Uint8Array> }> {
  const [mine, rest] = stream.tee();
  const reader = mine.getReader();
  const decoder = new TextDecoder();
  let text = "";
  let complete = false;
  const readAll = (async () => {
    for (;;) {
      const { done, value } = await reader.read();
      if (done) return void (complete = true);
      text += decoder.decode(value, { stream: true });
    }
  })();
  // Data with nothing deferred is encoded in one go: complete within this turn of the event loop.
  await Promise.race([readAll, new Promise((resolve) => setImmediate(resolve))]);
  if (!complete) {
    void reader.cancel().catch(() => {});
    return { text: null, rest };
  }
  return { text: text + decoder.decode(), rest };
}

/**
 * A kept render for this key, with `nonce` in place of the nonce it was rendered with: a stream of
 * the kept pieces themselves (never copied, never changed) and the nonce between them, so a repeat
 * answer allocates next to nothing.
 */
export function keptRender(key: string, nonce: string): ReadableStream<Uint8Array> | null {
  const hit = entries.get(key);
  if (!hit) return null;
  const nonceBytes = Buffer.from(nonce, "utf8");
  // Small pieces and the nonces between them go out joined (a small copy); large pieces as they are kept.
  // Fewer, larger chunks: each chunk costs a trip through the streams and the compressor.
  const chunks: Buffer[] = [];
  let small: Buffer[] = [];
  const flush = () => {
    if (small.length) chunks.push(small.length === 1 ? small[0]! : Buffer.concat(small));
    small = [];
  };
  hit.parts.forEach((part, i) => {
    if (i > 0) small.push(nonceBytes);
    if (part.length >= SMALL_PIECE) {
      flush();
      chunks.push(part);
    } else {
      small.push(part);
    }
  });
  flush();
  return new ReadableStream<Uint8Array>({
    start(controller) {
      for (const chunk of chunks) controller.enqueue(chunk);
      controller.close();
    },
  });
}

/**
 * The whole answer for a kept render with `nonce` written in, as a few buffers: gzip-encoded
 * (pieces compressed once, the nonce spliced in) or plain. Null when the render is not kept.
 */
export function keptBody(key: string, nonce: string, gzip: boolean): Buffer[] | null {
  const hit = entries.get(key);
  if (!hit) return null;
  const nonceBytes = Buffer.from(nonce, "utf8");
  if (!gzip) return hit.parts.flatMap((part, i) => (i > 0 ? [nonceBytes, part] : [part]));
  if (!hit.gzip) {
    hit.gzip = hit.parts.map(deflatePiece);
    entries.grow(
      key,
      hit,
      hit.gzip.reduce((n, piece) => n + piece.deflated.length, 0),
    );
  }
  return splicedGzip(hit.gzip, nonceBytes);
}

/** Keeps a finished render; the least recently used go first when the cache is full. */
export function keepRender(key: string, html: Buffer | string, nonce: string): void {
  const bytes = typeof html === "string" ? Buffer.from(html, "utf8") : html;
  if (bytes.length > MAX_BYTES / 4) return;
  // Cut at the nonce's bytes; the pieces are views of the page's own buffer (nothing copied), which
  // nobody changes: the first answer sends that same buffer.
  const needle = Buffer.from(nonce, "utf8");
  const parts: Buffer[] = [];
  let from = 0;
  for (let at = bytes.indexOf(needle); at !== -1; at = bytes.indexOf(needle, from)) {
    parts.push(bytes.subarray(from, at));
    from = at + needle.length;
  }
  parts.push(bytes.subarray(from));
  entries.set(key, { parts }, bytes.length);
}

/** For tests: how many renders are kept and their size. */
export function pageMemoStats(): { entries: number; bytes: number } {
  return { entries: entries.size, bytes: entries.bytes };
}

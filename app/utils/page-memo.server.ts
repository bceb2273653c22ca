import crypto from "node:crypto";

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
 * data, renders without a nonce (the development server), and anything outside a plain-data key.
 */

const MAX_ENTRIES = 256;
const MAX_BYTES = 48 * 1024 * 1024;

/** The page cut at each place its nonce stood, as UTF-8 bytes (a Buffer body spares the per-answer string check). */
type Entry = { parts: Buffer[]; bytes: number };
const entries = new Map<string, Entry>();
let totalBytes = 0;

class NotPlainData extends Error {}

/** JSON with the shapes JSON would blur kept apart (Map, Set, undefined); a promise or function is not plain data. */
function stableText(value: unknown): string {
  return JSON.stringify(value, (_key, v: unknown) => {
    if (v === undefined) return "\u0000undefined";
    if (typeof v === "function" || typeof v === "symbol") throw new NotPlainData();
    if (typeof v === "bigint") return `\u0000bigint:${v}`;
    if (v instanceof Map) return { "\u0000map": [...v.entries()] };
    if (v instanceof Set) return { "\u0000set": [...v.values()] };
    if (v && typeof v === "object" && typeof (v as { then?: unknown }).then === "function") throw new NotPlainData();
    return v;
  });
}

export type RenderInputs = {
  url: string;
  statusCode: number;
  loaderData: Record<string, unknown>;
  actionData: Record<string, unknown> | null;
  errors: Record<string, unknown> | null;
  nonce: string;
  method: string;
};

/** The key of a render that may be kept, or null when this one must not be. */
export function renderKey(inputs: RenderInputs): string | null {
  if (inputs.method !== "GET" || inputs.statusCode !== 200 || !inputs.nonce) return null;
  if (inputs.errors || inputs.actionData) return null;
  let text: string;
  try {
    text = stableText(inputs.loaderData);
  } catch (error) {
    if (error instanceof NotPlainData) return null;
    throw error;
  }
  const { pathname, search } = new URL(inputs.url);
  return crypto.createHash("sha256").update(pathname).update("\n").update(search).update("\n").update(text).digest("base64url");
}

/** A kept render for this key, with `nonce` in place of the nonce it was rendered with. */
export function keptRender(key: string, nonce: string): Uint8Array<ArrayBuffer> | null {
  const hit = entries.get(key);
  if (!hit) return null;
  entries.delete(key);
  entries.set(key, hit); // most recently used last
  const nonceBytes = Buffer.from(nonce, "utf8");
  const pieces: Buffer[] = [];
  hit.parts.forEach((part, i) => {
    if (i > 0) pieces.push(nonceBytes);
    pieces.push(part);
  });
  return Buffer.concat(pieces) as Uint8Array<ArrayBuffer>;
}

/** Keeps a finished render; the least recently used go first when the cache is full. */
export function keepRender(key: string, html: string, nonce: string): void {
  const parts = html.split(nonce).map((part) => Buffer.from(part, "utf8"));
  const bytes = parts.reduce((n, part) => n + part.length, 0);
  if (bytes > MAX_BYTES / 4) return;
  const old = entries.get(key);
  if (old) totalBytes -= old.bytes;
  entries.delete(key);
  entries.set(key, { parts, bytes });
  totalBytes += bytes;
  for (const [k, e] of entries) {
    if (entries.size <= MAX_ENTRIES && totalBytes <= MAX_BYTES) break;
    entries.delete(k);
    totalBytes -= e.bytes;
  }
}

/** For tests: how many renders are kept and their size. */
export function pageMemoStats(): { entries: number; bytes: number } {
  return { entries: entries.size, bytes: totalBytes };
}

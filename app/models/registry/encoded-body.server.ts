import crypto from "node:crypto";
import { promisify } from "node:util";
import zlib from "node:zlib";

/*
 * The finished bytes of an answer that many requests repeat (a download, the map data, an API
 * page), with its brotli and gzip encodings made once, when first asked for, and kept beside it.
 * An answer from it names its encoding (the compression middleware leaves an answer that already
 * has a Content-Encoding alone), varies on Accept-Encoding, carries a strong ETag per encoding and
 * is 304 when the client already has it.
 */

export type Coding = "br" | "gzip";

export type EncodedBody = {
  identity: Buffer;
  /** A hash of the identity bytes: the ETag's opaque part (with "-br"/"-gzip" for an encoding). */
  tag: string;
  coded: Partial<Record<Coding, Buffer>>;
  pending: Partial<Record<Coding, Promise<Buffer>>>;
};

// Quality 5 brotli is both smaller than gzip and quick; each encoding is made once per body.
const BROTLI: zlib.BrotliOptions = {
  params: { [zlib.constants.BROTLI_PARAM_QUALITY]: 5, [zlib.constants.BROTLI_PARAM_MODE]: zlib.constants.BROTLI_MODE_TEXT },
};
const GZIP: zlib.ZlibOptions = { level: 6 };
const brotliAsync = promisify(zlib.brotliCompress);
const gzipAsync = promisify(zlib.gzip);

export function encodedBody(bytes: Buffer): EncodedBody {
  return { identity: bytes, tag: crypto.createHash("sha1").update(bytes).digest("base64url"), coded: {}, pending: {} };
}

/** Total bytes held by a body and the encodings made so far. */
export const heldBytes = (body: EncodedBody): number =>
  body.identity.byteLength + (body.coded.br?.byteLength ?? 0) + (body.coded.gzip?.byteLength ?? 0);

/** The encoding to answer with: brotli or gzip as the client accepts (its q-values first, brotli on a tie), else none. */
export function preferredCoding(acceptEncoding: string | null): Coding | null {
  if (!acceptEncoding) return null;
  const weights = new Map<string, number>();
  for (const part of acceptEncoding.split(",")) {
    const [name, ...params] = part.split(";").map((s) => s.trim().toLowerCase());
    if (!name) continue;
    const q = params.map((p) => /^q=([0-9.]+)$/.exec(p)).find(Boolean);
    weights.set(name, q ? Number(q[1]) : 1);
  }
  const weight = (c: Coding) => weights.get(c) ?? weights.get("*") ?? 0;
  const best = (["br", "gzip"] as const).filter((c) => weight(c) > 0).sort((a, b) => weight(b) - weight(a));
  return best[0] ?? null;
}

const etagOf = (body: EncodedBody, coding: Coding | null) => `"${body.tag}${coding ? `-${coding}` : ""}"`;

/** If-None-Match names this body in any of its encodings (or is *). */
function notModified(request: Request, body: EncodedBody): boolean {
  const header = request.headers.get("If-None-Match");
  if (!header) return false;
  if (header.trim() === "*") return true;
  return [...header.matchAll(/"([^"]*)"/g)].some(([, t]) => t === body.tag || t === `${body.tag}-br` || t === `${body.tag}-gzip`);
}

function codedSync(body: EncodedBody, coding: Coding): Buffer {
  return (body.coded[coding] ??=
    coding === "br" ? zlib.brotliCompressSync(body.identity, BROTLI) : zlib.gzipSync(body.identity, GZIP));
}

/** The body in an encoding, made off the request thread (zlib's pool) once; `grew` learns the bytes added. */
function codedAsync(body: EncodedBody, coding: Coding, grew: (bytes: number) => void): Promise<Buffer> {
  const done = body.coded[coding];
  if (done) return Promise.resolve(done);
  return (body.pending[coding] ??= (coding === "br" ? brotliAsync(body.identity, BROTLI) : gzipAsync(body.identity, GZIP)).then(
    (bytes) => {
      body.coded[coding] = bytes;
      delete body.pending[coding];
      grew(bytes.byteLength);
      return bytes;
    },
    (error: unknown) => {
      delete body.pending[coding];
      throw error;
    },
  ));
}

function answer(body: EncodedBody, coding: Coding | null, bytes: Buffer | null, headers: Headers): Response {
  headers.set("ETag", etagOf(body, coding));
  headers.append("Vary", "Accept-Encoding");
  headers.delete("Content-Encoding");
  headers.delete("Content-Length");
  if (!bytes) return new Response(null, { status: 304, headers });
  if (coding) headers.set("Content-Encoding", coding);
  headers.set("Content-Length", String(bytes.byteLength));
  // A stream of the held bytes themselves: a Uint8Array body would be copied for every answer.
  const stream = new ReadableStream<Uint8Array>({
    start(controller) {
      controller.enqueue(bytes);
      controller.close();
    },
  });
  return new Response(stream, { status: 200, headers });
}

/*
 * A React Router data request (`/api/map-sites.data`, from a fetcher) reads the loader's answer
 * itself and sends it on in its own format: that answer must be the plain body, never encoded.
 */
function codingFor(request: Request): Coding | null {
  if (new URL(request.url).pathname.endsWith(".data")) return null;
  return preferredCoding(request.headers.get("Accept-Encoding"));
}

/** The answer from a small body, encoding it here when first needed (a few ms for a few hundred KB). */
export function encodedAnswer(
  request: Request,
  body: EncodedBody,
  headers: HeadersInit,
  notModifiedHeaders?: HeadersInit,
): Response {
  const coding = codingFor(request);
  if (notModified(request, body)) return answer(body, coding, null, new Headers(notModifiedHeaders ?? headers));
  return answer(body, coding, coding ? codedSync(body, coding) : body.identity, new Headers(headers));
}

/** The answer from a large body, encoding it off the request thread when first needed. */
export async function encodedAnswerAsync(
  request: Request,
  body: EncodedBody,
  headers: HeadersInit,
  grew: (bytes: number) => void,
): Promise<Response> {
  const coding = codingFor(request);
  if (notModified(request, body)) return answer(body, coding, null, new Headers(headers));
  return answer(body, coding, coding ? await codedAsync(body, coding, grew) : body.identity, new Headers(headers));
}

import crypto from "node:crypto";
import zlib from "node:zlib";
import { describe, expect, test } from "vitest";
import { deflatePiece, splicedGzip } from "#app/utils/spliced-gzip.server.ts";

/*
 * The spliced answer must be an ordinary gzip member: zlib's own gunzip (which checks the CRC-32
 * and the length in the trailer, RFC 1952) gives back exactly the pieces with the text between them.
 */

const nonce = () => Buffer.from(crypto.randomBytes(16).toString("base64"));
const joined = (pieces: Buffer[], text: Buffer) => Buffer.concat(pieces.flatMap((p, i) => (i > 0 ? [text, p] : [p])));
const spliced = (pieces: Buffer[], text: Buffer) => Buffer.concat(splicedGzip(pieces.map(deflatePiece), text));

describe("splicedGzip", () => {
  test("a page cut at its nonces comes back whole with another nonce in every place", () => {
    const html = Buffer.from(
      `<html><head><script nonce="§">a()</script></head><body>${"<tr><td>KVX-1</td></tr>".repeat(4000)}<script nonce="§">b()</script></body></html>`,
    );
    const pieces = html
      .toString()
      .split("§")
      .map((p) => Buffer.from(p));
    const text = nonce();
    const out = spliced(pieces, text);
    expect(zlib.gunzipSync(out).toString()).toBe(html.toString().replaceAll("§", text.toString()));
    expect(out.length).toBeLessThan(html.length / 10);
  });

  test("any pieces, empty ones included, any text up to one stored block", () => {
    for (let round = 0; round < 40; round++) {
      const pieces = Array.from({ length: 1 + (round % 7) }, (_, i) =>
        i === round % 3 ? Buffer.alloc(0) : crypto.randomBytes((round * 977 + i * 131) % 70_000),
      );
      const text = round === 39 ? crypto.randomBytes(65_535) : nonce();
      expect(zlib.gunzipSync(spliced(pieces, text)).equals(joined(pieces, text))).toBe(true);
    }
  });

  test("the trailer holds the CRC-32 and length of the whole answer", () => {
    const pieces = [Buffer.from("The quick brown fox "), Buffer.from(" over the lazy dog")];
    const text = Buffer.from("jumps");
    const out = spliced(pieces, text);
    // Check value: CRC-32 of "The quick brown fox jumps over the lazy dog" is 0x414fa339 (common practice).
    expect(out.readUInt32LE(out.length - 8)).toBe(0x414fa339);
    expect(out.readUInt32LE(out.length - 4)).toBe(43);
  });

  test("text longer than one stored block is refused", () => {
    expect(() => splicedGzip([deflatePiece(Buffer.from("a")), deflatePiece(Buffer.from("b"))], Buffer.alloc(65_536))).toThrow(
      RangeError,
    );
  });
});

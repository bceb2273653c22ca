import zlib from "node:zlib";

/*
 * A gzip answer made from pieces compressed once, with short per-answer text spliced in between
 * them uncompressed: a kept page whose only per-answer difference is its CSP nonce goes out
 * compressed without compressing anything per answer.
 *
 * Each kept piece is compressed on its own as raw DEFLATE ending in a sync flush (RFC 1951: the
 * output stops on a byte boundary, no final block, no reference back past its own start). Between
 * two pieces the per-answer text goes as a stored block (BTYPE 00: a header byte, LEN, NLEN, the
 * bytes). One empty final stored block ends the stream. The gzip wrapper (RFC 1952) needs the
 * CRC-32 and length of the whole uncompressed answer: the CRC is carried along the pieces' kept
 * CRCs with zlib's combine rule (crc32_combine: multiply by x^(8·len) modulo the CRC polynomial),
 * so an answer costs a few hundred operations, not a pass over its bytes.
 */

/** One kept piece, compressed, with what the gzip trailer needs of it. */
export type DeflatedPiece = { deflated: Buffer; crc: number; length: number; shift: number };

const GZIP_HEADER = Buffer.from([0x1f, 0x8b, 0x08, 0x00, 0, 0, 0, 0, 0x00, 0xff]);
/** A final stored block of no bytes: BFINAL=1, BTYPE=00, LEN=0, NLEN=0xffff. */
const FINAL_EMPTY_BLOCK = Buffer.from([0x01, 0x00, 0x00, 0xff, 0xff]);
const STORED_MAX = 65_535;

/** Compresses one kept piece (done once, when the piece is kept). */
export function deflatePiece(piece: Buffer): DeflatedPiece {
  const deflated = zlib.deflateRawSync(piece, { level: 9, finishFlush: zlib.constants.Z_SYNC_FLUSH });
  return { deflated, crc: zlib.crc32(piece), length: piece.length, shift: xPow8n(piece.length) };
}

/**
 * The gzip member for pieces[0] + text + pieces[1] + text + … + pieces[n-1]: the same `text`
 * between every two pieces (a nonce), its bytes stored uncompressed.
 */
export function splicedGzip(pieces: DeflatedPiece[], text: Buffer): Buffer[] {
  if (text.length > STORED_MAX) throw new RangeError("spliced text longer than one stored block");
  const stored = Buffer.allocUnsafe(5 + text.length);
  stored[0] = 0x00; // BFINAL=0, BTYPE=00 (the stream is on a byte boundary after a sync flush)
  stored.writeUInt16LE(text.length, 1);
  stored.writeUInt16LE(~text.length & 0xffff, 3);
  text.copy(stored, 5);
  const textCrc = zlib.crc32(text);
  const textShift = xPow8n(text.length);

  const out: Buffer[] = [GZIP_HEADER];
  let crc = 0;
  let length = 0;
  pieces.forEach((piece, i) => {
    if (i > 0) {
      out.push(stored);
      crc = multModP(textShift, crc) ^ textCrc;
      length += text.length;
    }
    out.push(piece.deflated);
    crc = multModP(piece.shift, crc) ^ piece.crc;
    length += piece.length;
  });
  out.push(FINAL_EMPTY_BLOCK);
  const trailer = Buffer.allocUnsafe(8);
  trailer.writeUInt32LE(crc >>> 0, 0);
  trailer.writeUInt32LE(length >>> 0, 4);
  out.push(trailer);
  return out;
}

// --- CRC-32 arithmetic in GF(2)[x] modulo the reflected polynomial (zlib's crc32.c, multmodp/x2nmodp).

const POLY = 0xedb88320;

/** a·b modulo the CRC polynomial (reflected: bit 31 is x^0). */
function multModP(a: number, b: number): number {
  let m = 0x80000000;
  let p = 0;
  for (;;) {
    if (a & m) {
      p ^= b;
      if ((a & (m - 1)) === 0) break;
    }
    m >>>= 1;
    b = b & 1 ? (b >>> 1) ^ POLY : b >>> 1;
  }
  return p >>> 0;
}

/** x^(2^k) modulo the polynomial, k = 0..31. */
const X2N: number[] = (() => {
  const table: number[] = [];
  let p = 1 << 30; // x^1
  table.push(p);
  for (let k = 1; k < 32; k++) table.push((p = multModP(p, p)));
  return table;
})();

/** x^(8·n) modulo the polynomial: what appending n bytes does to a CRC. */
function xPow8n(n: number): number {
  let p = 0x80000000; // x^0
  let k = 3; // 8·n = n·2^3
  while (n > 0) {
    if (n & 1) p = multModP(X2N[k & 31]!, p);
    n = Math.floor(n / 2);
    k++;
  }
  return p;
}

// Writing many probabilities as JSON numbers quickly: the calendar densities of a download are
// millions of values. Each value is written straight into a byte buffer with six significant
// digits (Float32 holds about seven), trailing zeros dropped, in the notation toPrecision(6) uses:
// plain decimals down to 1e-6, exponent notation below. Client-safe, no dependencies.

const POW10: number[] = Array.from({ length: 64 }, (_, k) => Number(`1e${k}`));
const NEG_POW10: number[] = Array.from({ length: 64 }, (_, k) => Number(`1e-${k}`));
/** floor(log10(2^(b − 127))) for each Float32 binary exponent b, kept within [−60, −1]. */
const DECIMAL_EXPONENT = Int8Array.from({ length: 256 }, (_, b) =>
  Math.min(-1, Math.max(-60, Math.floor((b - 127) * Math.LOG10E * Math.LN2))),
);
const F32 = new Float32Array(1);
const U32 = new Uint32Array(F32.buffer);
const ZERO = 48;
/** "00", "01", … "99" as ASCII digit pairs. */
const PAIRS = Uint8Array.from({ length: 200 }, (_, i) => ZERO + (i & 1 ? (i >> 1) % 10 : Math.floor((i >> 1) / 10)));
const DOT = 46;
const COMMA = 44;

/** Most bytes a value in (0, 1) takes: "0.00000123456" (13); others fall back to at most 24. */
const MAX_BYTES = 13;

function writeAscii(out: Uint8Array, at: number, text: string): number {
  for (let i = 0; i < text.length; i++) out[at++] = text.charCodeAt(i);
  return at;
}

/**
 * Writes v (0 ≤ v, finite) at out[at…] and returns the next free index. The value read back
 * differs from v by at most half a unit in the sixth significant digit.
 */
export function writeProbability(out: Uint8Array, at: number, v: number): number {
  if (v === 0) {
    out[at] = ZERO;
    return at + 1;
  }
  if (!(v > 0 && v < 1)) return writeAscii(out, at, Number.isFinite(v) ? String(Number(v.toPrecision(6))) : "null");
  // Decimal exponent e: the largest e in [−60, −1] with 10^e ≤ v (10^e as the table holds it). A
  // guess from v's binary exponent is settled against the table (at most a step either way), then
  // the six digits m = round(v · 10^(5−e)).
  F32[0] = v;
  let e = DECIMAL_EXPONENT[U32[0]! >>> 23]!;
  while (e > -60 && v < NEG_POW10[-e]!) e--;
  while (e < -1 && v >= NEG_POW10[-e - 1]!) e++;
  let m = Math.round(v * POW10[5 - e]!) | 0;
  if (m >= 1e6) {
    m = 1e5;
    e++;
  }
  if (m < 1e5) {
    // v just below a power of ten, rounded into the lower decade.
    m *= 10;
    e--;
  }
  if (e >= 0) return writeAscii(out, at, "1");
  // The six digits two at a time (100000 ≤ m < 1000000), then trailing zeros dropped by walking
  // back over the bytes written.
  const q1 = (m / 100) | 0;
  const q2 = (q1 / 100) | 0;
  const d12 = q2 << 1;
  const d34 = (q1 - q2 * 100) << 1;
  const d56 = (m - q1 * 100) << 1;
  if (e >= -6) {
    out[at++] = ZERO;
    out[at++] = DOT;
    for (let z = -e - 1; z > 0; z--) out[at++] = ZERO;
    out[at] = PAIRS[d12]!;
    out[at + 1] = PAIRS[d12 + 1]!;
    out[at + 2] = PAIRS[d34]!;
    out[at + 3] = PAIRS[d34 + 1]!;
    out[at + 4] = PAIRS[d56]!;
    out[at + 5] = PAIRS[d56 + 1]!;
    at += 6;
    while (out[at - 1] === ZERO) at--; // the first digit is never 0
    return at;
  }
  // d.ddddde-X
  out[at] = PAIRS[d12]!;
  out[at + 1] = DOT;
  out[at + 2] = PAIRS[d12 + 1]!;
  out[at + 3] = PAIRS[d34]!;
  out[at + 4] = PAIRS[d34 + 1]!;
  out[at + 5] = PAIRS[d56]!;
  out[at + 6] = PAIRS[d56 + 1]!;
  at += 7;
  while (out[at - 1] === ZERO) at--;
  if (out[at - 1] === DOT) at--;
  // "e-X" (e is at most −7 here), written without building a string.
  out[at++] = 101; // e
  out[at++] = 45; // -
  const x = -e;
  if (x >= 10) {
    const t = (x / 10) | 0;
    out[at++] = ZERO + t;
    out[at++] = ZERO + x - t * 10;
  } else out[at++] = ZERO + x;
  return at;
}

let scratch = new Uint8Array(64 * 1024);

/** `[p0,p1,…]` as ASCII bytes, in an array of exactly that length (written in a reused buffer, then copied). */
export function probabilityArrayBytes(values: ArrayLike<number>): Uint8Array {
  const need = values.length * (MAX_BYTES + 1) + 2;
  if (scratch.length < need) scratch = new Uint8Array(Math.max(need, scratch.length * 2));
  let out = scratch;
  let at = 0;
  out[at++] = 91; // [
  for (let i = 0; i < values.length; i++) {
    if (out.length - at < 32) {
      // Only values of 1 or more (never in a density) can take more than MAX_BYTES.
      const grown = new Uint8Array(out.length * 2);
      grown.set(out);
      out = scratch = grown;
    }
    if (i > 0) out[at++] = COMMA;
    at = writeProbability(out, at, values[i]!);
  }
  out[at++] = 93; // ]
  return out.slice(0, at);
}

// Writing many probabilities as JSON numbers quickly: the calendar densities of a download are
// millions of values. Each value is written straight into a byte buffer with six significant
// digits (Float32 holds about seven), trailing zeros dropped, in the notation toPrecision(6) uses:
// plain decimals down to 1e-6, exponent notation below. Client-safe, no dependencies.

const POW10: number[] = Array.from({ length: 64 }, (_, k) => Number(`1e${k}`));
const NEG_POW10: number[] = Array.from({ length: 64 }, (_, k) => Number(`1e-${k}`));
const ZERO = 48;
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
  // Decimal exponent e: 10^e ≤ v < 10^(e+1), then the six digits m = round(v · 10^(5−e)).
  let e = -1;
  while (v < NEG_POW10[-e]! && e > -60) e--;
  let m = Math.round(v * POW10[5 - e]!);
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
  let digits = 6;
  while (m % 10 === 0) {
    m /= 10;
    digits--;
  }
  if (e >= -6) {
    out[at++] = ZERO;
    out[at++] = DOT;
    for (let z = -e - 1; z > 0; z--) out[at++] = ZERO;
    for (let i = digits - 1; i >= 0; i--) {
      const q = (m / 10) | 0;
      out[at + i] = ZERO + m - q * 10;
      m = q;
    }
    return at + digits;
  }
  // d.ddddde-X
  const first = at;
  const end = at + digits + (digits > 1 ? 1 : 0);
  for (let i = end - 1; i > first; i--) {
    if (digits > 1 && i === first + 1) {
      out[i] = DOT;
      continue;
    }
    const q = (m / 10) | 0;
    out[i] = ZERO + m - q * 10;
    m = q;
  }
  out[first] = ZERO + m;
  return writeAscii(out, end, `e${e}`);
}

/** `[p0,p1,…]` as ASCII bytes. */
export function probabilityArrayBytes(values: ArrayLike<number>): Uint8Array {
  let out = new Uint8Array(values.length * (MAX_BYTES + 1) + 2);
  let at = 0;
  out[at++] = 91; // [
  for (let i = 0; i < values.length; i++) {
    if (out.length - at < 32) {
      // Only values of 1 or more (never in a density) can take more than MAX_BYTES.
      const grown = new Uint8Array(out.length * 2);
      grown.set(out);
      out = grown;
    }
    if (i > 0) out[at++] = COMMA;
    at = writeProbability(out, at, values[i]!);
  }
  out[at++] = 93; // ]
  return out.subarray(0, at);
}

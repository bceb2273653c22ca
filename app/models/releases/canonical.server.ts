// The canonical serialisation of a release's items and its SHA-256 checksum. The rule is
// documented in docs/releases-checksum.md and at /api-docs; anyone can recompute the checksum
// from a release's JSON download, in any language, years later. Change nothing here without a
// new rule version: published checksums depend on every byte.
import { createHash } from "node:crypto";

/** Version of the rule, published beside each checksum. */
export const CHECKSUM_RULE = "thawline-canonical-1";

/** Fractional numbers are rounded to this many decimal places when items are frozen. */
export const FROZEN_DECIMALS = 6;
/** Larger magnitudes are refused: beyond it, common libraries switch to exponent notation. */
export const MAX_FROZEN_MAGNITUDE = 1e15;

/**
 * Rounds every fractional number in a JSON value to FROZEN_DECIMALS places (−0 becomes 0), so
 * that each one is written in plain decimal notation by every common JSON library: the shortest
 * round-trip form of a number from 1e-6 to 1e15 in magnitude never needs an exponent.
 */
export function roundForFreezing<T>(value: T): T {
  if (typeof value === "number") {
    if (!Number.isFinite(value)) throw new Error("A frozen item cannot hold NaN or an infinite number.");
    if (Math.abs(value) >= MAX_FROZEN_MAGNITUDE) throw new Error(`A frozen item cannot hold ${value}: too large.`);
    const r = Number.isInteger(value) ? value : Number(value.toFixed(FROZEN_DECIMALS));
    return (r === 0 ? 0 : r) as T;
  }
  if (Array.isArray(value)) return value.map((v) => roundForFreezing(v)) as T;
  if (value && typeof value === "object") {
    const out: Record<string, unknown> = {};
    for (const [k, v] of Object.entries(value)) if (v !== undefined) out[k] = roundForFreezing(v);
    return out as T;
  }
  return value;
}

function canonicalNumber(n: number): string {
  if (!Number.isFinite(n)) throw new Error("The canonical form has no NaN or infinite numbers.");
  if (Object.is(n, -0)) return "0";
  const s = String(n);
  if (/e/i.test(s)) throw new Error(`The number ${s} needs an exponent; round it with roundForFreezing first.`);
  return s;
}

/**
 * The canonical text of a JSON value: object keys sorted by code point, no whitespace, strings
 * escaped as JSON.stringify does (non-ASCII characters written as themselves), numbers in plain
 * decimal notation with the fewest digits that read back to the same value, integers without a
 * fraction. Arrays keep their order. Undefined object members are left out.
 */
export function canonicalJson(value: unknown): string {
  if (value === null) return "null";
  switch (typeof value) {
    case "boolean":
      return value ? "true" : "false";
    case "number":
      return canonicalNumber(value);
    case "string":
      return JSON.stringify(value);
    case "object": {
      if (Array.isArray(value)) return `[${value.map(canonicalJson).join(",")}]`;
      const entries = Object.entries(value as Record<string, unknown>)
        .filter(([, v]) => v !== undefined)
        .sort(([a], [b]) => (a < b ? -1 : a > b ? 1 : 0));
      return `{${entries.map(([k, v]) => `${JSON.stringify(k)}:${canonicalJson(v)}`).join(",")}}`;
    }
    default:
      throw new Error(`The canonical form has no ${typeof value} values.`);
  }
}

/** What a release's checksum covers: its items ordered by determination id (without any `density` payload). */
export function checksumPayload(items: readonly { id: number }[]): unknown[] {
  return [...items]
    .sort((a, b) => a.id - b.id)
    .map((item) => {
      const { density: _density, ...rest } = item as { id: number; density?: unknown };
      return rest;
    });
}

/** SHA-256 (lower-case hex) of the UTF-8 bytes of the canonical text of the items, ordered by id. */
export function releaseChecksum(items: readonly { id: number }[]): string {
  return createHash("sha256")
    .update(canonicalJson(checksumPayload(items)), "utf8")
    .digest("hex");
}

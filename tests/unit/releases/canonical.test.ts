import fc from "fast-check";
import { describe, expect, test } from "vitest";
import { canonicalJson, releaseChecksum, roundForFreezing } from "#app/models/releases/canonical.server.ts";

/** Frozen items refuse magnitudes of 1e15 and more; the property is about the rest. */
function hasHugeNumber(v: unknown): boolean {
  if (typeof v === "number") return Math.abs(v) >= 1e15;
  if (v && typeof v === "object") return Object.values(v).some(hasHugeNumber);
  return false;
}

describe("canonicalJson", () => {
  test("sorts keys, drops whitespace and undefined members, keeps array order", () => {
    expect(canonicalJson({ z: true, a: [3, 1, 2], m: undefined, b: { y: 1, x: null } })).toBe(
      '{"a":[3,1,2],"b":{"x":null,"y":1},"z":true}',
    );
  });

  test("numbers: integers without fraction, fractions in plain decimal, −0 as 0", () => {
    expect(canonicalJson([5, 12.5, -0.25, -0, 0.000001, 123456789.123456])).toBe("[5,12.5,-0.25,0,0.000001,123456789.123456]");
  });

  test("refuses numbers that would need an exponent, NaN and infinities", () => {
    expect(() => canonicalJson(1e-7)).toThrow(/exponent/);
    expect(() => canonicalJson(Number.NaN)).toThrow();
    expect(() => canonicalJson(Infinity)).toThrow();
    expect(() => roundForFreezing({ a: 1e21 })).toThrow(/too large/);
  });

  test("strings are escaped as JSON, non-ASCII kept as UTF-8", () => {
    expect(canonicalJson('ΔR "x"\n')).toBe('"ΔR \\"x\\"\\n"');
  });

  test("key order of the input does not matter, and the text reads back to itself", () => {
    fc.assert(
      fc.property(fc.jsonValue(), (v) => {
        fc.pre(!hasHugeNumber(v));
        const rounded = roundForFreezing(JSON.parse(JSON.stringify(v)) as unknown);
        const text = canonicalJson(rounded);
        expect(canonicalJson(JSON.parse(text))).toBe(text);
        if (rounded && typeof rounded === "object" && !Array.isArray(rounded)) {
          const reversed = Object.fromEntries(Object.entries(rounded).reverse());
          expect(canonicalJson(reversed)).toBe(text);
        }
      }),
    );
  });
});

describe("roundForFreezing", () => {
  test("rounds fractions to 6 decimals so that none needs an exponent", () => {
    expect(roundForFreezing({ a: 0.1 + 0.2, b: 1e-7, c: -4e-7, d: [59.12345678], e: 7 })).toEqual({
      a: 0.3,
      b: 0,
      c: 0,
      d: [59.123457],
      e: 7,
    });
  });
});

describe("releaseChecksum", () => {
  test("SHA-256 of the canonical text of the items ordered by id, without density payloads", () => {
    // Expected digest computed independently: printf '%s' '<the canonical text>' | sha256sum
    const items = [
      { id: 2, name: 'x"y\n', lat: -0.000001, density: { p: [0.5, 0.5] } },
      { z: true, id: 1, b: null, a: [1, 0.5, "é"] },
    ];
    expect(releaseChecksum(items)).toBe("35b8e14296b4359b24d57b70578e5e202108decb7cc9266b28fd262ba241747f");
  });
});

import { describe, expect, it } from "vitest";
import { probabilityArrayBytes, writeProbability } from "#app/utils/probability-text.ts";

/* The fast writer of density probabilities agrees with toPrecision(6) (common practice: six significant digits). */

const text = (values: number[]) => new TextDecoder().decode(probabilityArrayBytes(values));
const one = (v: number) => {
  const out = new Uint8Array(32);
  return new TextDecoder().decode(out.subarray(0, writeProbability(out, 0, v)));
};

describe("writeProbability", () => {
  it("writes the value toPrecision(6) writes, without trailing zeros", () => {
    expect(one(0)).toBe("0");
    expect(one(0.5)).toBe("0.5");
    expect(one(0.0123456789)).toBe("0.0123457");
    expect(one(0.000001)).toBe("0.000001");
    expect(one(0.00000123456)).toBe("0.00000123456");
    expect(one(9.9999999e-7)).toBe("0.000001"); // rounds up into the next decade
    expect(one(1.5e-38)).toBe("1.5e-38");
    expect(one(2.345678e-9)).toBe("2.34568e-9");
    expect(one(0.0999999999)).toBe("0.1");
    expect(one(1)).toBe("1");
  });

  it("reads back as Number(v.toPrecision(6)) for a million random Float32 probabilities", () => {
    const values = new Float32Array(1_000_000);
    let seed = 12345;
    const rand = () => (seed = (seed * 1103515245 + 12345) % 2 ** 31) / 2 ** 31;
    for (let i = 0; i < values.length; i++) values[i] = rand() < 0.05 ? 0 : 10 ** (-rand() * 14) * rand();
    const parsed = JSON.parse(text(Array.from(values))) as number[];
    let mismatches = 0;
    for (let i = 0; i < values.length; i++) if (parsed[i] !== Number(values[i]!.toPrecision(6))) mismatches++;
    expect(mismatches).toBe(0);
  });

  it("writes a JSON array", () => {
    expect(text([])).toBe("[]");
    expect(text([0.25, 0, 1e-7])).toBe("[0.25,0,1e-7]");
  });
});

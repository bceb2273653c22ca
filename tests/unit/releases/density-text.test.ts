import { beforeEach, describe, expect, it } from "vitest";
import { clearDensityTexts, densityText, densityTextHeld, heldDensityText } from "#app/models/releases/density-text.server.ts";
import { probabilityArrayBytes } from "#app/utils/probability-text.ts";

// A bound of 1 MB for this file (env() is read lazily, at the first write).
process.env.DENSITY_TEXT_CACHE_MB = "1";

/** A density of n years, every value distinct, as its text takes about 12 bytes a value. */
function density(n: number, seed: number): Float32Array {
  const v = new Float32Array(n);
  for (let i = 0; i < n; i++) v[i] = ((i + seed) % 997) / 1e5 + 1e-9 * seed;
  return v;
}

const text = (bytes: Uint8Array) => new TextDecoder().decode(bytes);

describe("densities held as text by their hash", () => {
  beforeEach(() => clearDensityTexts());

  it("writes what the probability writer writes and holds it under the hash", () => {
    const d = density(500, 1);
    expect(heldDensityText("a".repeat(64))).toBeUndefined();
    const written = densityText("a".repeat(64), d);
    expect(text(written)).toBe(text(probabilityArrayBytes(d)));
    expect(heldDensityText("a".repeat(64))).toBe(written);
    expect(densityTextHeld().entries).toBe(1);
  });

  it("holds nothing for a density without a hash", () => {
    densityText(null, density(100, 2));
    densityText(undefined, density(100, 3));
    expect(densityTextHeld()).toEqual({ entries: 0, bytes: 0 });
    expect(heldDensityText(null)).toBeUndefined();
  });

  it("stays within its bound, letting the least recently used go first", () => {
    // About 400 kB each against a 1 MB bound: two fit, a third pushes out the least recently used.
    const one = densityText("1", density(45_000, 1));
    densityText("2", density(45_000, 2));
    expect(one.byteLength).toBeGreaterThan(350_000);
    expect(one.byteLength * 3).toBeGreaterThan(1024 * 1024);
    expect(heldDensityText("1")).toBe(one); // "1" is now the most recently used
    densityText("3", density(45_000, 3));
    expect(heldDensityText("2")).toBeUndefined();
    expect(heldDensityText("1")).toBe(one);
    expect(heldDensityText("3")).toBeDefined();
    expect(densityTextHeld().bytes).toBeLessThanOrEqual(1024 * 1024);
  });

  it("does not hold a text larger than the whole bound", () => {
    const big = densityText("big", density(150_000, 4));
    expect(big.byteLength).toBeGreaterThan(1024 * 1024);
    expect(heldDensityText("big")).toBeUndefined();
  });
});

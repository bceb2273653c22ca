// Assertions for check values quoted to a given number of decimals.
import { expect } from "vitest";

/** Passes when `actual` rounds to `quoted` at `decimals` places (half a unit in the last digit, plus float slack). */
export function expectQuoted(actual: number, quoted: number, decimals: number): void {
  const tol = 0.5 * 10 ** -decimals + 1e-9 * Math.max(1, Math.abs(quoted));
  expect(Math.abs(actual - quoted), `${actual} vs quoted ${quoted}`).toBeLessThanOrEqual(tol);
}

import { expect, test } from "vitest";
import { ByteBoundedCache } from "#app/utils/byte-bounded-cache.ts";

test("the least recently used go first past the byte bound; get counts as use, peek does not", () => {
  const cache = new ByteBoundedCache<string>({ maxBytes: 30 });
  cache.set("a", "A", 10);
  cache.set("b", "B", 10);
  cache.set("c", "C", 10);
  expect(cache.get("a")).toBe("A"); // a is now the most recently used
  expect(cache.peek("b")).toBe("B"); // b stays the least recently used
  cache.set("d", "D", 10);
  expect(cache.keys()).toEqual(["c", "a", "d"]);
  expect(cache.bytes).toBe(30);
});

test("replacing a key counts its new size only; growth of a value still held counts, of one gone does not", () => {
  const cache = new ByteBoundedCache<{ n: number }>({ maxBytes: 100 });
  const one = { n: 1 };
  cache.set("x", one, 40);
  cache.set("x", one, 20);
  expect(cache.bytes).toBe(20);
  cache.grow("x", one, 15);
  expect(cache.bytes).toBe(35);
  cache.grow("x", { n: 2 }, 50); // not the value held under x
  cache.grow("y", one, 50); // not held
  expect(cache.bytes).toBe(35);
});

test("a bound on the number of entries, and new bounds applied at once", () => {
  const cache = new ByteBoundedCache<number>({ maxBytes: 1000, maxEntries: 2 });
  cache.set("a", 1, 1);
  cache.set("b", 2, 1);
  cache.set("c", 3, 1);
  expect(cache.keys()).toEqual(["b", "c"]);
  cache.setLimits({ maxBytes: 1 });
  expect(cache.keys()).toEqual(["c"]);
  cache.clear();
  expect(cache.size).toBe(0);
  expect(cache.bytes).toBe(0);
});

import { describe, expect, it } from "vitest";
import { exhaust, heldRateLimitKeys, hit } from "#app/utils/rate-limit.server.ts";

describe("hit (fixed window)", () => {
  it("allows `limit` hits per window, then refuses with the time left, then opens a new window", () => {
    const t0 = 1_000_000;
    for (let i = 0; i < 3; i++) expect(hit("k:a", 3, 60_000, { now: t0 + i * 1000 })).toEqual({ allowed: true, retryAfterS: 0 });
    expect(hit("k:a", 3, 60_000, { now: t0 + 10_000 })).toEqual({ allowed: false, retryAfterS: 50 });
    expect(hit("k:a", 3, 60_000, { now: t0 + 59_500 })).toEqual({ allowed: false, retryAfterS: 1 });
    expect(hit("k:a", 3, 60_000, { now: t0 + 60_000 })).toEqual({ allowed: true, retryAfterS: 0 });
  });

  it("counts keys separately", () => {
    expect(hit("k:b", 1, 60_000, { now: 5 }).allowed).toBe(true);
    expect(hit("k:b", 1, 60_000, { now: 6 }).allowed).toBe(false);
    expect(hit("k:c", 1, 60_000, { now: 6 }).allowed).toBe(true);
  });

  it("forgets counters whose window has passed, sweeping at most once a minute", () => {
    hit("k:old", 1, 1000, { now: 0 });
    hit("k:live", 1, 600_000, { now: 0 });
    expect(heldRateLimitKeys()).toBe(2);
    // Within the minute nothing is swept; after it, only the counter whose window ended is gone.
    hit("k:other", 1, 1000, { now: 30_000 });
    expect(heldRateLimitKeys()).toBe(3);
    hit("k:other", 1, 1000, { now: 61_000 });
    expect(heldRateLimitKeys()).toBe(2);
    expect(hit("k:live", 1, 600_000, { now: 61_000 }).allowed).toBe(false);
  });

  it("a key used up at once stays refused for as long as it is kept", () => {
    expect(hit("k:code", 5, 600_000, { now: 0 }).allowed).toBe(true);
    exhaust("k:code", 600_000, { now: 1000 });
    expect(hit("k:code", 5, 600_000, { now: 2000 })).toEqual({ allowed: false, retryAfterS: 599 });
  });
});

import { describe, expect, it } from "vitest";
import { hit, pruneRateLimits } from "#app/utils/rate-limit.server.ts";
import { getDb } from "#app/db/client.server.ts";

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

  it("prunes old counters", () => {
    hit("k:old", 1, 1000, { now: 0 });
    pruneRateLimits(1000, getDb(), 10_000);
    const left = getDb().$client.prepare("select count(*) as n from rate_limits where key = 'k:old'").get() as { n: number };
    expect(left.n).toBe(0);
  });
});

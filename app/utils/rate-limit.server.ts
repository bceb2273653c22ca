import { getDb, type Db } from "#app/db/client.server.ts";

export type RateLimitResult = { allowed: boolean; retryAfterS: number };

/**
 * Fixed-window counter: the window opens at a key's first hit and lasts `windowMs`; the first
 * `limit` hits in it are allowed, later ones are refused until the window has passed. One
 * UPSERT, so concurrent requests never double-count or lose a hit.
 */
export function hit(key: string, limit: number, windowMs: number, options: { db?: Db; now?: number } = {}): RateLimitResult {
  const db = options.db ?? getDb();
  const now = options.now ?? Date.now();
  const expired = now - windowMs;
  const row = db.$client
    .prepare(
      `insert into rate_limits (key, window_start, count) values (@key, @now, 1)
       on conflict(key) do update set
         window_start = case when window_start <= @expired then @now else window_start end,
         count = case when window_start <= @expired then 1 else count + 1 end
       returning window_start as windowStart, count`,
    )
    .get({ key, now, expired }) as { windowStart: number; count: number };
  if (row.count <= limit) return { allowed: true, retryAfterS: 0 };
  return { allowed: false, retryAfterS: Math.max(1, Math.ceil((row.windowStart + windowMs - now) / 1000)) };
}

export type BudgetResult = { allowed: boolean; retryAfterS: number; used: number };

/**
 * A budget of work per key that refills steadily (a token bucket kept as the amount in use):
 * `capacity` units at most, `capacity` more every `refillMs`. A request that costs `cost` is
 * allowed when it fits, and then counted; a refused one is not counted, and `retryAfterS` says
 * when it would fit. One transaction, so concurrent requests never spend the same units twice.
 */
export function spend(
  key: string,
  cost: number,
  capacity: number,
  refillMs: number,
  options: { db?: Db; now?: number } = {},
): BudgetResult {
  const db = options.db ?? getDb();
  const now = options.now ?? Date.now();
  const rate = capacity / refillMs;
  const run = db.$client.transaction(() => {
    const row = db.$client.prepare("select window_start as at, count from rate_limits where key = ?").get(key) as
      { at: number; count: number } | undefined;
    const used = row ? Math.max(0, row.count - (now - row.at) * rate) : 0;
    if (used + cost > capacity) {
      return {
        allowed: false,
        retryAfterS: Math.max(1, Math.ceil((used + cost - capacity) / rate / 1000)),
        used: Math.round(used),
      };
    }
    const after = Math.round(used + cost);
    db.$client
      .prepare(
        `insert into rate_limits (key, window_start, count) values (@key, @now, @after)
         on conflict(key) do update set window_start = @now, count = @after`,
      )
      .run({ key, now, after });
    return { allowed: true, retryAfterS: 0, used: after };
  });
  return run.immediate();
}

/** Uses up a key's window at once (e.g. a one-time code that has been used). */
export function exhaust(key: string, options: { db?: Db; now?: number } = {}) {
  const db = options.db ?? getDb();
  const now = options.now ?? Date.now();
  db.$client
    .prepare(
      `insert into rate_limits (key, window_start, count) values (@key, @now, @max)
       on conflict(key) do update set window_start = @now, count = @max`,
    )
    .run({ key, now, max: Number.MAX_SAFE_INTEGER });
}

/** Removes counters whose window ended long ago (housekeeping; safe to call any time). */
export function pruneRateLimits(olderThanMs = 24 * 60 * 60 * 1000, db: Db = getDb(), now = Date.now()) {
  db.$client.prepare("delete from rate_limits where window_start < ?").run(now - olderThanMs);
}

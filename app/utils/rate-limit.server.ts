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

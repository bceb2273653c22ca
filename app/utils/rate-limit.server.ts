/*
 * Rate limits and work budgets, kept in this process's memory (decision 020).
 *
 * Thawline is one Node process (decision 001): every request passes through this module, so a
 * counter in a Map sees every hit, and a hit costs no database write. They used to be rows in the
 * `rate_limits` table, and that made every rate-limited request a write on the server's thread:
 * while the writer thread held the write lock for a long commit, those requests waited on SQLite's
 * synchronous busy timeout, freezing the whole thread for up to 5 s and then failing. What a restart
 * forgets is a window of at most 15 minutes of counts. The one thing that must outlive a restart, a
 * sign-in code that has been used, is kept in the database (auth/spent-codes.server.ts).
 */

export type RateLimitResult = { allowed: boolean; retryAfterS: number };

/** A key's window (hit, exhaust) or budget (spend): when it began and what it holds; `until`: when it no longer matters. */
type Entry = { at: number; count: number; until: number };

const entries = new Map<string, Entry>();
let nextSweep = 0;
/** Expired entries are swept this often (every second while the map holds this many keys). */
const SWEEP_EVERY_MS = 60_000;
const SWEEP_AT_SIZE = 50_000;

function sweep(now: number) {
  if (now < nextSweep) return;
  for (const [key, e] of entries) if (e.until <= now) entries.delete(key);
  // Many live keys (many clients at once): look again sooner, but not on every hit.
  nextSweep = now + (entries.size >= SWEEP_AT_SIZE ? 1_000 : SWEEP_EVERY_MS);
}

/**
 * Fixed-window counter: the window opens at a key's first hit and lasts `windowMs`; the first
 * `limit` hits in it are allowed, later ones are refused until the window has passed.
 */
export function hit(key: string, limit: number, windowMs: number, options: { now?: number } = {}): RateLimitResult {
  const now = options.now ?? Date.now();
  sweep(now);
  let e = entries.get(key);
  if (!e || e.at <= now - windowMs) {
    e = { at: now, count: 0, until: now + windowMs };
    entries.set(key, e);
  }
  e.count++;
  e.until = Math.max(e.until, e.at + windowMs);
  if (e.count <= limit) return { allowed: true, retryAfterS: 0 };
  return { allowed: false, retryAfterS: Math.max(1, Math.ceil((e.at + windowMs - now) / 1000)) };
}

export type BudgetResult = { allowed: boolean; retryAfterS: number; used: number };

/**
 * A budget of work per key that refills steadily (a token bucket kept as the amount in use):
 * `capacity` units at most, `capacity` more every `refillMs`. A request that costs `cost` is
 * allowed when it fits, and then counted; a refused one is not counted, and `retryAfterS` says
 * when it would fit.
 */
export function spend(
  key: string,
  cost: number,
  capacity: number,
  refillMs: number,
  options: { now?: number } = {},
): BudgetResult {
  const now = options.now ?? Date.now();
  sweep(now);
  const rate = capacity / refillMs;
  const e = entries.get(key);
  const used = e ? Math.max(0, e.count - (now - e.at) * rate) : 0;
  if (used + cost > capacity) {
    return {
      allowed: false,
      retryAfterS: Math.max(1, Math.ceil((used + cost - capacity) / rate / 1000)),
      used: Math.round(used),
    };
  }
  const after = Math.round(used + cost);
  // Empty again (and so forgettable) once it has refilled.
  entries.set(key, { at: now, count: after, until: now + Math.ceil(after / rate) });
  return { allowed: true, retryAfterS: 0, used: after };
}

/** Uses up a key's window at once (e.g. a one-time code that has been used); it stays used for `keepMs`. */
export function exhaust(key: string, keepMs: number, options: { now?: number } = {}) {
  const now = options.now ?? Date.now();
  entries.set(key, { at: now, count: Number.MAX_SAFE_INTEGER, until: now + keepMs });
}

/** Forgets every counter (tests start each case from none). */
export function resetRateLimits() {
  entries.clear();
  nextSweep = 0;
}

/** How many keys are held (tests of the sweep). */
export function heldRateLimitKeys(): number {
  return entries.size;
}

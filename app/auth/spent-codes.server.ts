import type { Db } from "#app/db/client.server.ts";
import { writeWhenFree } from "#app/db/write-when-free.server.ts";

/*
 * Sign-in codes that have been used. The code is stateless in the sign-in library (its secret
 * travels in the browser's cookie), so a copied cookie and code would sign in a second time while
 * the code is valid. The tries of a code are counted in memory (utils/rate-limit.server.ts), but
 * that a code was used must outlive a restart of the server: it is a row of the `rate_limits`
 * table, whose other counters now live in memory (decision 020).
 */

const keyOf = (secretHash: string) => `sign-in:spent:${secretHash}`;

/** Whether the code whose secret hashes to `secretHash` was used within the last `validMs`. */
export function isCodeSpent(db: Db, secretHash: string, validMs: number, now = Date.now()): boolean {
  const row = db.$client.prepare("select window_start as at from rate_limits where key = ?").get(keyOf(secretHash)) as
    { at: number } | undefined;
  return !!row && row.at > now - validMs;
}

/** Records the code as used (and forgets codes used more than a day ago), without holding up the thread. */
export async function markCodeSpent(db: Db, secretHash: string, now = Date.now()): Promise<void> {
  await writeWhenFree(db, () => {
    db.$client.prepare("delete from rate_limits where window_start < ?").run(now - 24 * 60 * 60 * 1000);
    db.$client
      .prepare(
        `insert into rate_limits (key, window_start, count) values (?, ?, 1)
         on conflict(key) do update set window_start = excluded.window_start`,
      )
      .run(keyOf(secretHash), now);
  });
}

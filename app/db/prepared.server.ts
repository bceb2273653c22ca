import type Database from "better-sqlite3";
import type { Db } from "#app/db/client.server.ts";

/*
 * One prepared statement per connection and SQL text, made on first use. Preparing costs more than
 * running a small query (Drizzle prepares afresh every time), so statements a request or a bulk
 * write runs again and again are kept. Only for SQL from a fixed set of texts (never one built from
 * what a user typed): the cache is never emptied.
 */
const statementCache = new WeakMap<Database.Database, Map<string, Database.Statement>>();

export function prepared(db: Db, text: string): Database.Statement {
  let cache = statementCache.get(db.$client);
  if (!cache) statementCache.set(db.$client, (cache = new Map()));
  let stmt = cache.get(text);
  if (!stmt) cache.set(text, (stmt = db.$client.prepare(text)));
  return stmt;
}

import fs from "node:fs";
import path from "node:path";
import Database from "better-sqlite3";
import { drizzle, type BetterSQLite3Database } from "drizzle-orm/better-sqlite3";
import { migrate } from "drizzle-orm/better-sqlite3/migrator";
import * as schema from "./schema.ts";
import { env } from "#app/utils/env.server.ts";

export type Db = BetterSQLite3Database<typeof schema> & { $client: Database.Database };

export function openDatabase(file: string): Db {
  if (file !== ":memory:") fs.mkdirSync(path.dirname(path.resolve(file)), { recursive: true });
  const sqlite = new Database(file);
  sqlite.pragma("journal_mode = WAL");
  sqlite.pragma("foreign_keys = ON");
  sqlite.pragma("synchronous = NORMAL");
  sqlite.pragma("busy_timeout = 5000");
  sqlite.pragma("cache_size = -65536");
  // Reads of large blobs (calendar densities) straight from the mapped file, without copying pages.
  sqlite.pragma("mmap_size = 1073741824");
  return drizzle(sqlite, { schema }) as Db;
}

export function migrateDatabase(db: Db) {
  migrate(db, { migrationsFolder: path.resolve(process.cwd(), "drizzle") });
}

// One connection per process, kept across dev-server reloads.
const globalForDb = globalThis as unknown as { __thawlineDb?: Db };

export function getDb(): Db {
  if (!globalForDb.__thawlineDb) globalForDb.__thawlineDb = openDatabase(env().DATABASE_URL);
  return globalForDb.__thawlineDb;
}

/** Lets tests point the process at a database of their own. */
export function setDb(db: Db | undefined) {
  globalForDb.__thawlineDb = db;
}

export { schema };

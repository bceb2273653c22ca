import fs from "node:fs";
import path from "node:path";
import { afterAll } from "vitest";

// Each test file gets its own copy of the migrated base database, opened before any app module
// asks for a connection (the client reads DATABASE_URL lazily).
const base = path.resolve("tmp/integration/base.db");
const file = path.resolve(
  `tmp/integration/w${process.env.VITEST_POOL_ID ?? "0"}-${Date.now()}-${Math.random().toString(36).slice(2)}.db`,
);
fs.copyFileSync(base, file);
process.env.DATABASE_URL = file;
process.env.NODE_ENV = "test";
process.env.SECURE_COOKIES = "false";
process.env.MAIL_OUTBOX_DIR = path.resolve("tmp/integration/outbox");

afterAll(async () => {
  const { getDb, setDb } = await import("#app/db/client.server.ts");
  getDb().$client.close();
  setDb(undefined);
  for (const suffix of ["", "-wal", "-shm"]) fs.rmSync(file + suffix, { force: true });
});

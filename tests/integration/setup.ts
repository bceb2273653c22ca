import fs from "node:fs";
import path from "node:path";
import { afterAll, inject } from "vitest";

// Each test file gets its own copy of the migrated base database, opened before any app module
// asks for a connection (the client reads DATABASE_URL lazily).
const dir = inject("integrationDir");
const file = path.join(dir, `w${process.env.VITEST_POOL_ID ?? "0"}-${Date.now()}-${Math.random().toString(36).slice(2)}.db`);
fs.copyFileSync(path.join(dir, "base.db"), file);
process.env.DATABASE_URL = file;
process.env.NODE_ENV = "test";
process.env.SECURE_COOKIES = "false";
// The fixtures' sites lie where the demo's do (northern Labrador and Ungava Bay).
process.env.REGION_OF_INTEREST = "55,62,-75,-58";
process.env.MAIL_OUTBOX_DIR = path.join(dir, "outbox");

afterAll(async () => {
  const { getDb, setDb } = await import("#app/db/client.server.ts");
  getDb().$client.close();
  setDb(undefined);
  for (const suffix of ["", "-wal", "-shm"]) fs.rmSync(file + suffix, { force: true });
});

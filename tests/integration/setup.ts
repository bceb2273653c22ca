import path from "node:path";
import { afterAll, beforeEach, inject } from "vitest";
import { freshDatabase, removeDatabases, testDatabaseFile } from "#tests/support/test-db.ts";
import { resetRateLimits } from "#app/utils/rate-limit.server.ts";

// Set before any app module reads its environment (env() is parsed once, lazily).
process.env.DATABASE_URL = testDatabaseFile;
process.env.NODE_ENV = "test";
process.env.SECURE_COOKIES = "false";
// The fixtures' sites lie where the demo's do (northern Labrador and Ungava Bay).
process.env.REGION_OF_INTEREST = "55,62,-75,-58";
process.env.MAIL_OUTBOX_DIR = path.join(inject("integrationDir"), "outbox");
// A small model-run limit, so a test can go past it without streaming half a gigabyte (test runs are a few KB).
process.env.MODEL_RUN_MAX_BYTES = String(2 * 1024 * 1024);

// Every test starts from a fresh copy of the migrated base (or of its file's seeded base, see
// tests/support/test-db.ts seedForFile), so no test sees another's writes.
// Rate limits are counted in memory: each test starts with none, as with its fresh database.
beforeEach(() => {
  freshDatabase();
  resetRateLimits();
});

afterAll(() => {
  removeDatabases();
});

import fs from "node:fs";
import path from "node:path";
import { buildBaseDatabase } from "../support/base-db.ts";

/**
 * Builds one migrated database with the curves imported; every test file copies it
 * (tests/integration/setup.ts), so tests start from the same state and never share writes.
 */
export default async function setup() {
  const dir = path.resolve("tmp/integration");
  fs.rmSync(dir, { recursive: true, force: true });
  fs.mkdirSync(dir, { recursive: true });
  const base = path.join(dir, "base.db");
  await buildBaseDatabase(base);
  process.env.THAWLINE_TEST_BASE_DB = base;
}

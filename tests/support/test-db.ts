import fs from "node:fs";
import path from "node:path";
import { afterAll, beforeAll, inject } from "vitest";
import { openDatabase, setDb, type Db } from "#app/db/client.server.ts";

/*
 * Every integration test gets a fresh copy of a migrated base database (tests/integration/setup.ts
 * calls `freshDatabase()` before each test), so no test sees another's writes and the suite passes
 * in any order. A file whose tests share a larger starting state builds it once with
 * `seedForFile(build)`: the build runs on a copy of the base, and that seeded copy becomes the
 * base every test of the file starts from.
 */

const dir = inject("integrationDir");
const plainBase = path.join(dir, "base.db");
// One folder per worker: files in a worker run one after another, workers never share a path.
// Model-run files are kept beside the database (data folder/model-runs, by run id), so the
// folder keeps one worker's run files from another's runs of the same id.
const workerDir = path.join(dir, `w${process.env.VITEST_POOL_ID ?? "0"}-${process.pid}`);
fs.mkdirSync(workerDir, { recursive: true });
/** The database the app uses during a test (DATABASE_URL; model-run files are stored beside it). */
export const testDatabaseFile = path.join(workerDir, "app.db");
const seededBase = path.join(workerDir, "seeded.db");

let base = plainBase;
let open: Db | undefined;

function remove(file: string) {
  for (const suffix of ["", "-wal", "-shm"]) fs.rmSync(file + suffix, { force: true });
}

/** Closes the app's connection (if this module opened one) and points the app at nothing. */
export function closeDatabase() {
  if (open?.$client.open) open.$client.close();
  open = undefined;
  setDb(undefined);
}

/** Replaces `file` with a copy of `from` and points the app's connection at it. */
function openCopy(from: string, file: string): Db {
  closeDatabase();
  remove(file);
  fs.mkdirSync(path.dirname(file), { recursive: true });
  fs.copyFileSync(from, file);
  open = openDatabase(file);
  setDb(open);
  return open;
}

/** A fresh copy of the current base (plain, or this file's seeded one) as the app's database. */
export function freshDatabase(): Db {
  return openCopy(base, testDatabaseFile);
}

/** Builds this file's starting state once; each of its tests then starts from a copy of it. */
export function seedForFile(build: () => unknown) {
  beforeAll(async () => {
    const db = openCopy(plainBase, seededBase);
    await build();
    db.$client.pragma("wal_checkpoint(TRUNCATE)");
    closeDatabase();
    base = seededBase;
  });
  afterAll(() => {
    base = plainBase;
    remove(seededBase);
  });
}

/** The end of the file: close and remove its databases. */
export function removeDatabases() {
  closeDatabase();
  fs.rmSync(workerDir, { recursive: true, force: true });
}

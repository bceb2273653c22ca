import fs from "node:fs";
import { migrateDatabase, openDatabase } from "#app/db/client.server.ts";
import { importBundledCurves } from "#app/models/calibration/curves.server.ts";

/** A migrated database with the bundled curves, the starting point of every test database. */
export async function buildBaseDatabase(file: string) {
  for (const suffix of ["", "-wal", "-shm"]) fs.rmSync(file + suffix, { force: true });
  const db = openDatabase(file);
  migrateDatabase(db);
  await importBundledCurves(db);
  db.$client.pragma("wal_checkpoint(TRUNCATE)");
  db.$client.close();
}

// `npm run setup`: apply migrations and import the bundled curves into DATABASE_URL. Idempotent.
import { migrateDatabase, openDatabase } from "#app/db/client.server.ts";
import { BUNDLED_CURVES, CurveImportError, importBundledCurves } from "#app/models/calibration/curves.server.ts";
import { env } from "#app/utils/env.server.ts";

const { DATABASE_URL, CURVES_DIR } = env();
const db = openDatabase(DATABASE_URL);
try {
  migrateDatabase(db);
  console.log(`Database ready: ${DATABASE_URL}`);
  const results = await importBundledCurves(db, CURVES_DIR);
  results.forEach((r, i) =>
    console.log(`  ${BUNDLED_CURVES[i]!.displayName}: ${r.created ? "imported" : "already present"} (curve ${r.curveId})`),
  );
} catch (error) {
  if (error instanceof CurveImportError) {
    console.error(`Set-up stopped: ${error.message}`);
    process.exit(1);
  }
  throw error;
} finally {
  db.$client.close();
}

// `npm run setup`: apply migrations and import the bundled curves into DATABASE_URL. Idempotent.
import { migrateDatabase, openDatabase } from "#app/db/client.server.ts";
import { BUNDLED_CURVES, CurveImportError, importBundledCurves } from "#app/models/calibration/curves.server.ts";
import { recomputeDoseRates } from "#app/models/submission/recompute-dose-rates.server.ts";
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
  // Dose rates the registry computed before the full model (every term, every error) are computed again.
  const doseRates = recomputeDoseRates(db);
  if (doseRates.changed > 0 || doseRates.failed.length > 0) {
    console.log(
      `  Dose rates: ${doseRates.changed} of ${doseRates.examined} computed again with the full model and recalibrated` +
        (doseRates.failed.length ? `; ${doseRates.failed.length} left as they were (their inputs give no dose rate)` : ""),
    );
  }
} catch (error) {
  if (error instanceof CurveImportError) {
    console.error(`Set-up stopped: ${error.message}`);
    process.exit(1);
  }
  throw error;
} finally {
  db.$client.close();
}

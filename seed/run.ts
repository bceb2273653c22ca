// `npm run seed -- --size small|full [--reset] [--seed N] [--no-calibrate]` seeds DATABASE_URL with
// the demo scenario; `--export-geojson <file>` writes the demo isochrones to a file instead
// (or as well, when --size is also given).
import { parseArgs } from "node:util";
import { migrateDatabase, openDatabase } from "#app/db/client.server.ts";
import { env } from "#app/utils/env.server.ts";
import { exportIsochrones, SeedRefusedError, seedDemo } from "./seed.server.ts";
import { SCENARIO_SIZES, type ScenarioSize } from "./scenario.ts";

const { values } = parseArgs({
  options: {
    size: { type: "string" },
    reset: { type: "boolean", default: false },
    seed: { type: "string" },
    "no-calibrate": { type: "boolean", default: false },
    "export-geojson": { type: "string" },
    help: { type: "boolean", default: false },
  },
});

const usage = `Usage: npm run seed -- --size small|full [--reset] [--seed N] [--no-calibrate]
       npm run seed -- --export-geojson <file> [--seed N]`;

if (values.help) {
  console.log(usage);
  process.exit(0);
}
const seed = values.seed === undefined ? undefined : Number(values.seed);
if (seed !== undefined && !Number.isInteger(seed)) {
  console.error(`--seed must be a whole number, not "${values.seed}".\n${usage}`);
  process.exit(2);
}

if (values["export-geojson"]) {
  const n = exportIsochrones(values["export-geojson"], seed);
  console.log(`Wrote ${n} demo isochrones to ${values["export-geojson"]}.`);
  if (!values.size) process.exit(0);
}

const size = (values.size ?? "small") as ScenarioSize;
if (!(size in SCENARIO_SIZES)) {
  console.error(`--size must be small or full, not "${values.size}".\n${usage}`);
  process.exit(2);
}

const started = performance.now();
const { DATABASE_URL } = env();
const db = openDatabase(DATABASE_URL);
try {
  const t0 = performance.now();
  migrateDatabase(db);
  console.log(`migrate: ${(performance.now() - t0).toFixed(0)} ms (${DATABASE_URL})`);
  let lastShown = 0;
  const result = await seedDemo(db, {
    size,
    seed,
    reset: values.reset,
    calibrate: !values["no-calibrate"],
    onStage: (stage, ms) => console.log(`${stage}: ${ms.toFixed(0)} ms`),
    onCalibrationProgress: (done, total) => {
      if (done === total || done - lastShown >= 1000) {
        lastShown = done;
        console.log(`  calibrated ${done} / ${total}`);
      }
    },
  });
  const s = result.summary;
  console.log(
    `Seeded ${size}: ${s.sites} sites, ${s.samples} samples, ${s.determinations} determinations ` +
      `(${s.radiocarbon} radiocarbon, ${s.luminescence} luminescence); planted faults ${JSON.stringify(s.faults)}; ` +
      `${result.calibrated} calibrated, ${result.calibrationFailures} not calibrated.`,
  );
  console.log(`total: ${(performance.now() - started).toFixed(0)} ms`);
} catch (error) {
  if (error instanceof SeedRefusedError) {
    console.error(`Seed refused: ${error.message}`);
    process.exitCode = 1;
  } else {
    throw error;
  }
} finally {
  db.$client.close();
}

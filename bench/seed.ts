// Bench section "seed": importing the bundled curves and seeding the full demo scenario. The run
// (bench/run.ts) keeps the seeded database as the starting point of every other section.
import type { Db } from "#app/db/client.server.ts";
import { importBundledCurves } from "#app/models/calibration/curves.server.ts";
import { seedDemo } from "#seed/seed.server.ts";
import { ms, type Report } from "./support.ts";

/** Migrates, imports the curves and seeds `db` (full size), reporting each step. */
export async function seedBenchDatabase(db: Db, report: Report) {
  let t = performance.now();
  await importBundledCurves(db);
  report("seed", "curve import (IntCal20 + Marine20)", ms(performance.now() - t));
  t = performance.now();
  const seeded = await seedDemo(db, { size: "full" });
  const seedMs = performance.now() - t;
  report("seed", `full seed (${seeded.summary.determinations} determinations, calibrated)`, `${(seedMs / 1000).toFixed(1)} s`);
  for (const s of seeded.timings) report("seed", `  stage: ${s.stage}`, ms(s.ms));
}

// `npx tsx bench/runs-score.ts <db> <run file>`: scores one run file against the database's default
// constraints in a process of its own, so the memory figures are the scoring's alone. Prints one
// JSON line: { ms, cpuMs, constraints, slices, rssBeforeMb, peakRssMb, heapBeforeMb, peakHeapMb, logL }.
import { openDatabase } from "#app/db/client.server.ts";
import { loadConstraints } from "#app/models/model-runs/constraints.server.ts";
import { closeRunFile, openRunFile } from "#app/models/model-runs/run-file.server.ts";
import { scoreRun } from "#app/models/model-runs/score-run.server.ts";

const [dbFile, file] = process.argv.slice(2);
if (!dbFile || !file) {
  console.error("Usage: npx tsx bench/runs-score.ts <db> <run file>");
  process.exit(2);
}
const mb = (b: number) => Math.round((b / 1048576) * 10) / 10;
const db = openDatabase(dbFile);
const set = loadConstraints(db);
// Warm the reader (h5wasm's module) on the same file, so the timing is the scoring's.
closeRunFile(await openRunFile(file, { maxBytes: Infinity }));
global.gc?.();
const rssBefore = process.memoryUsage().rss;
const heapBefore = process.memoryUsage().heapUsed;
let peakHeap = heapBefore;
let peakRss = rssBefore;
const t0 = performance.now();
const cpu0 = process.cpuUsage();
const run = await openRunFile(file, { maxBytes: Infinity });
const result = await scoreRun(
  run,
  set.constraints,
  {},
  {
    margins: true,
    progress: () => {
      const m = process.memoryUsage();
      if (m.heapUsed > peakHeap) peakHeap = m.heapUsed;
      if (m.rss > peakRss) peakRss = m.rss;
    },
  },
);
closeRunFile(run);
const ms = performance.now() - t0;
const cpu = process.cpuUsage(cpu0);
console.log(
  JSON.stringify({
    ms: Math.round(ms),
    cpuMs: Math.round((cpu.user + cpu.system) / 1000),
    constraints: set.constraints.length,
    slices: result.margins.length,
    rssBeforeMb: mb(rssBefore),
    peakRssMb: mb(Math.max(peakRss, process.resourceUsage().maxRSS * 1024)),
    heapBeforeMb: mb(heapBefore),
    peakHeapMb: mb(peakHeap),
    logL: result.totals.logLikelihood,
  }),
);
db.$client.close();

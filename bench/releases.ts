// Constraint sets and releases (issue 10): full-demo downloads, the live count, publishing 5,000 items.
import type { Db } from "#app/db/client.server.ts";
import { selectionCount } from "#app/models/registry/constraints.server.ts";
import { selectConstraints, selectionResponse } from "#app/models/releases/selection-download.server.ts";
import { publishRelease } from "#app/models/releases/releases.server.ts";
import { clearDensityTexts, densityTextHeld, warmDensityTexts } from "#app/models/releases/density-text.server.ts";
import { parseConstraintFilter } from "#app/utils/constraint-filter.ts";

import { median, type BenchSection, type Report } from "./support.ts";

function filter(q: string) {
  const r = parseConstraintFilter(new URLSearchParams(q));
  if (!r.ok) throw new Error(r.errors.join("; "));
  return r.filter;
}

/**
 * One download of the whole demo, read chunk by chunk as a socket would take it (counting bytes,
 * not gathering them into one buffer). Wall time, and this process's CPU time: the machine is
 * shared, so the CPU figure is the steadier one.
 */
async function timeDownload(
  db: Db,
  format: "csv" | "json",
  densities: boolean,
): Promise<{ ms: number; cpu: number; bytes: number }> {
  const t0 = performance.now();
  const c0 = process.cpuUsage();
  const res = selectionResponse(db, selectConstraints(db, filter("")), format, { densities });
  let bytes = 0;
  const reader = res.body!.getReader();
  for (let r = await reader.read(); !r.done; r = await reader.read()) bytes += r.value.byteLength;
  const c = process.cpuUsage(c0);
  return { ms: performance.now() - t0, cpu: (c.user + c.system) / 1000, bytes };
}

const cpuNote = (runs: { cpu: number }[], median: (xs: number[]) => number) =>
  `CPU ${median(runs.map((r) => r.cpu)).toFixed(0)} ms`;

export async function benchReleases(db: Db, userId: number, report: Report, median: (xs: number[]) => number) {
  const csv: { ms: number; cpu: number; bytes: number }[] = [];
  for (let i = 0; i < 5; i++) csv.push(await timeDownload(db, "csv", false));
  const n = selectionCount(db, filter(""));
  report(
    "constraints",
    `CSV download, full demo (${n} rows, ${(csv[0]!.bytes / 1e6).toFixed(1)} MB), median of 5 (${cpuNote(csv, median)})`,
    `${median(csv.map((r) => r.ms)).toFixed(0)} ms`,
    "≤ 200 ms",
  );
  // Cold: nothing held as text (the first such download after the server starts); warm: every
  // density already held by its hash (density-text.server.ts), as for any later download.
  const cold: { ms: number; cpu: number; bytes: number }[] = [];
  for (let i = 0; i < 3; i++) {
    clearDensityTexts();
    cold.push(await timeDownload(db, "json", true));
  }
  // The server fills the cache in the background after it starts (startup.server.ts): how long
  // that takes, in slices between requests; the downloads after it are the warm ones below.
  clearDensityTexts();
  const w0 = performance.now();
  const wc0 = process.cpuUsage();
  const warmed = await warmDensityTexts(db);
  const wc = process.cpuUsage(wc0);
  report(
    "constraints",
    `background warm-up after a start: ${warmed.entries} densities held as text (${(warmed.bytes / 1e6).toFixed(0)} MB; CPU ${((wc.user + wc.system) / 1000).toFixed(0)} ms)`,
    `${(performance.now() - w0).toFixed(0)} ms`,
  );
  const warm: { ms: number; cpu: number; bytes: number }[] = [];
  for (let i = 0; i < 3; i++) warm.push(await timeDownload(db, "json", true));
  const mb = (cold[0]!.bytes / 1e6).toFixed(0);
  report(
    "constraints",
    `JSON with densities, full demo (${mb} MB), nothing held (before the warm-up ends), median of 3 (${cpuNote(cold, median)})`,
    `${median(cold.map((r) => r.ms)).toFixed(0)} ms`,
    "≤ 1 s",
  );
  report(
    "constraints",
    `JSON with densities, full demo, after the warm-up (${(densityTextHeld().bytes / 1e6).toFixed(0)} MB), median of 3 (${cpuNote(warm, median)})`,
    `${median(warm.map((r) => r.ms)).toFixed(0)} ms`,
    "≤ 1 s",
  );
  const f = filter("bbox=-70,56,-62,60&from_cal_bp=9000&to_cal_bp=11000");
  const counts: number[] = [];
  for (let i = 0; i < 30; i++) {
    const t0 = performance.now();
    selectionCount(db, f);
    counts.push(performance.now() - t0);
  }
  report("constraints", "live count, region + time window, median of 30", `${median(counts).toFixed(1)} ms`, "≤ 20 ms");
  const ids = db.$client.prepare("select count(*) n from determinations").get() as { n: number };
  const pub: { ms: number; cpu: number }[] = [];
  let items = 0;
  for (let i = 0; i < 3; i++) {
    const t0 = performance.now();
    const c0 = process.cpuUsage();
    items = publishRelease(db, {
      name: "Bench release",
      version: `b${i}`,
      filter: filter(""),
      userId,
      baseUrl: "http://localhost/releases/",
    }).count;
    const c = process.cpuUsage(c0);
    pub.push({ ms: performance.now() - t0, cpu: (c.user + c.system) / 1000 });
  }
  report(
    "releases",
    `publish ${items} items (registry ${ids.n}), median of 3 (${cpuNote(pub, median)})`,
    `${(median(pub.map((r) => r.ms)) / 1000).toFixed(2)} s`,
    "≤ 2 s",
  );
}

export const bench: BenchSection = {
  name: "releases",
  about: "constraint downloads (CSV, JSON with densities), the live count for a region and window, publishing a release",
  async run({ db, report, userId }) {
    console.log("Constraint downloads, live count, publishing…");
    await benchReleases(db, userId("editor@example.org"), report, median);
  },
};

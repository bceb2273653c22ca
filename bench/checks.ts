// Bench section for the automatic checks: the whole-registry run time, and how well the checks
// find the faults the demo generator planted (scenario_truth): per fault kind the share of
// faulty determinations with a warning or conflict (recall), and the share of clean ones with
// one (false alarms). Nothing here is tuned to a seed; run it on any seeded database.

import fs from "node:fs";
import path from "node:path";
import { migrateDatabase, openDatabase, type Db } from "#app/db/client.server.ts";
import { computeAllChecks, storeCheckResults } from "#app/models/review/check-run.server.ts";
import { SEVERITY_RANK } from "#app/science/checks/types.ts";
import { seedDemo } from "#seed/seed.server.ts";
import { measure, seconds, type BenchSection, type Report } from "./support.ts";

export interface FaultRow {
  fault: string;
  count: number;
  flagged: number;
  /** Of the flagged, how many by each check (warning or conflict). */
  byCheck: Record<string, number>;
}

export interface CheckBench {
  determinations: number;
  computeMs: number;
  computeCpuMs: number;
  storeMs: number;
  storeCpuMs: number;
  faults: FaultRow[];
  clean: { count: number; flagged: number; byCheck: Record<string, number> };
}

export function benchChecks(db: Db): CheckBench {
  const compute = measure(() => computeAllChecks(db));
  const results = compute.value;
  const store = measure(() => storeCheckResults(db, results));
  const truth = db.$client.prepare("select determination_id as id, planted_fault as fault from scenario_truth").all() as {
    id: number;
    fault: string | null;
  }[];
  const rows = new Map<string, FaultRow>();
  const clean = { count: 0, flagged: 0, byCheck: {} as Record<string, number> };
  for (const { id, fault } of truth) {
    const list = results.get(id) ?? [];
    const hits = list.filter((r) => SEVERITY_RANK[r.severity] >= SEVERITY_RANK.warning);
    const target = fault ? (rows.get(fault) ?? rows.set(fault, { fault, count: 0, flagged: 0, byCheck: {} }).get(fault)!) : clean;
    target.count++;
    if (hits.length) target.flagged++;
    for (const h of hits) target.byCheck[h.check] = (target.byCheck[h.check] ?? 0) + 1;
  }
  return {
    determinations: results.size,
    computeMs: compute.ms,
    computeCpuMs: compute.cpuMs,
    storeMs: store.ms,
    storeCpuMs: store.cpuMs,
    faults: [...rows.values()].sort((a, b) => a.fault.localeCompare(b.fault)),
    clean,
  };
}

export function formatCheckBench(b: CheckBench, label: string): string[] {
  const pct = (n: number, d: number) => (d ? `${((100 * n) / d).toFixed(1)} %` : "–");
  const by = (m: Record<string, number>) =>
    Object.entries(m)
      .sort((a, c) => c[1] - a[1])
      .map(([k, v]) => `${k} ${v}`)
      .join(", ");
  const lines = [
    `${label}: ${b.determinations} determinations, checks computed in ${seconds(b.computeMs)} (CPU ${seconds(b.computeCpuMs)}), stored in ${seconds(b.storeMs)} (CPU ${seconds(b.storeCpuMs)})`,
  ];
  lines.push("  fault kind           n   recall (warning or conflict)   by check");
  for (const f of b.faults)
    lines.push(
      `  ${f.fault.padEnd(18)} ${String(f.count).padStart(4)}   ${pct(f.flagged, f.count).padStart(8)}                       ${by(f.byCheck)}`,
    );
  lines.push(
    `  ${"clean (false alarm)".padEnd(18)} ${String(b.clean.count).padStart(4)}   ${pct(b.clean.flagged, b.clean.count).padStart(8)}                       ${by(b.clean.byCheck)}`,
  );
  return lines;
}

function reportChecks(report: Report, label: string, b: CheckBench, timed: boolean) {
  const pct = (n: number, d: number) => (d ? `${((100 * n) / d).toFixed(1)} %` : "–");
  if (timed) {
    report("checks", `whole-registry run, ${b.determinations} determinations (compute)`, seconds(b.computeMs), "≤ 2 s");
    report("checks", "  CPU time of the compute", seconds(b.computeCpuMs));
    report("checks", "whole-registry run (store, one transaction)", seconds(b.storeMs));
    report("checks", "  CPU time of the store", seconds(b.storeCpuMs));
  }
  for (const f of b.faults) report(`checks ${label}`, `recall: ${f.fault} (n = ${f.count})`, pct(f.flagged, f.count));
  report(`checks ${label}`, `false alarms: clean (n = ${b.clean.count})`, pct(b.clean.flagged, b.clean.count));
}

export const bench: BenchSection = {
  name: "checks",
  about: "whole-registry check run, and recall / false alarms against the planted faults (default seed and seed 7)",
  async run({ db, dir, report }) {
    reportChecks(report, "seed default", benchChecks(db), true);
    // Another scenario seed, so the figures are not tuned to one (no model runs: the checks do not need them).
    const file = path.join(dir, "bench-seed-7.db");
    for (const suffix of ["", "-wal", "-shm"]) fs.rmSync(file + suffix, { force: true });
    const other = openDatabase(file);
    try {
      migrateDatabase(other);
      await seedDemo(other, { size: "full", seed: 7, ensemble: false });
      reportChecks(report, "seed 7", benchChecks(other), false);
    } finally {
      other.$client.close();
    }
  },
};

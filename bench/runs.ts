// Model-run scoring (issue 11): a 200 × 200 grid with 100 time slices written as NetCDF-4 and
// scored against the full demo's constraints (time and memory, in a process of its own), and a
// 30-run ensemble of GeoJSON margins scored one after another in this process.
import { spawnSync } from "node:child_process";
import fs from "node:fs";
import path from "node:path";
import type { Db } from "#app/db/client.server.ts";
import { loadConstraints } from "#app/models/model-runs/constraints.server.ts";
import { closeRunFile, openRunFile } from "#app/models/model-runs/run-file.server.ts";
import { scoreRun } from "#app/models/model-runs/score-run.server.ts";
import { runThicknessM } from "#seed/ensemble.ts";
import { demoGrid, writeGridRun } from "#seed/ensemble-files.server.ts";
import { marginsWithBias, retreatParams } from "#seed/retreat.ts";
import { DEFAULT_SEED } from "#seed/scenario.ts";

import type { BenchSection, Report } from "./support.ts";

const GRID_HALF_CELLS = 100; // 200 × 200
const GRID_CELL_M = 7000;
const SLICES = 100;
const ENSEMBLE_RUNS = 30;

/** Writes the 200 × 200 × 100 NetCDF-4 run (the demo's true history on a 7 km polar stereographic grid). */
export async function writeBenchGrid(file: string): Promise<void> {
  const p = retreatParams(DEFAULT_SEED);
  const grid = demoGrid(p, GRID_HALF_CELLS, GRID_CELL_M);
  const ages = Array.from({ length: SLICES }, (_, k) => 18000 - k * 120);
  await writeGridRun(file, {
    grid,
    time: { values: ages, attrs: { units: "years BP" } },
    withoutAxisAttributes: true,
    thicknessM: (k, g) => runThicknessM(p, { b1: 0, b2: 0 }, g, ages[k]),
  });
}

/** Writes 30 GeoJSON margin runs, the true retreat shifted by −600…+600 years, a slice every 100 years. */
export function writeBenchEnsemble(dir: string): string[] {
  const p = retreatParams(DEFAULT_SEED);
  return Array.from({ length: ENSEMBLE_RUNS }, (_, i) => {
    const bias = Math.round(-600 + (1200 * i) / (ENSEMBLE_RUNS - 1));
    const file = path.join(dir, `bench-margins-${String(i + 1).padStart(2, "0")}.geojson`);
    fs.writeFileSync(file, JSON.stringify(marginsWithBias(p, bias, 100)));
    return file;
  });
}

export async function benchRuns(db: Db, dbFile: string, report: Report): Promise<void> {
  const dir = path.resolve("tmp/bench-runs");
  fs.rmSync(dir, { recursive: true, force: true });
  fs.mkdirSync(dir, { recursive: true });
  try {
    // 1. The grid, scored in a child process so its memory is measured alone.
    const nc = path.join(dir, "bench-grid.nc");
    await writeBenchGrid(nc);
    const child = spawnSync(
      process.execPath,
      ["--expose-gc", "--import", "tsx", path.resolve("bench/runs-score.ts"), dbFile, nc],
      { encoding: "utf8" },
    );
    if (child.status !== 0) throw new Error(`bench/runs-score.ts failed: ${child.stderr}`);
    const r = JSON.parse(child.stdout.trim().split("\n").pop()!) as Record<string, number>;
    const size = `${(fs.statSync(nc).size / 1048576).toFixed(1)} MB`;
    report(
      "model runs",
      `score 200 × 200 grid, ${SLICES} slices (NetCDF-4, ${size}) against ${r.constraints} constraints`,
      `${(r.ms / 1000).toFixed(2)} s`,
      "≤ 2 s",
    );
    report("model runs", "  CPU time of that scoring (the machine is shared)", `${(r.cpuMs / 1000).toFixed(2)} s`);
    report("model runs", "  memory: peak RSS of the scoring process (before scoring)", `${r.peakRssMb} MB (${r.rssBeforeMb} MB)`);
    report("model runs", "  memory: peak JS heap while scoring (before scoring)", `${r.peakHeapMb} MB (${r.heapBeforeMb} MB)`);

    // 2. The GeoJSON ensemble, every run read, checked and scored as an upload would be.
    const files = writeBenchEnsemble(dir);
    const set = loadConstraints(db);
    const t0 = performance.now();
    const cpu0 = process.cpuUsage();
    for (const f of files) {
      const run = await openRunFile(f);
      try {
        await scoreRun(run, set.constraints, {}, { margins: true });
      } finally {
        closeRunFile(run);
      }
    }
    const ms = performance.now() - t0;
    const cpu = process.cpuUsage(cpu0);
    report(
      "model runs",
      `score a ${ENSEMBLE_RUNS}-run GeoJSON ensemble (121 slices each) against ${set.constraints.length} constraints`,
      `${(ms / 1000).toFixed(2)} s`,
      "≤ 10 s",
    );
    report("model runs", "  CPU time of the ensemble", `${((cpu.user + cpu.system) / 1e6).toFixed(2)} s`);
  } finally {
    fs.rmSync(dir, { recursive: true, force: true });
  }
}

export const bench: BenchSection = {
  name: "runs",
  about: "a 200 × 200 × 100 NetCDF-4 grid scored in a process of its own (time, CPU, memory) and a 30-run GeoJSON ensemble",
  async run({ db, dbFile, report }) {
    console.log("Model runs: a 200 × 200 × 100 NetCDF-4 grid and a 30-run GeoJSON ensemble…");
    await benchRuns(db, dbFile, report);
  },
};

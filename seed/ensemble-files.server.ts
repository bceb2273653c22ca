// Writes the demo ensemble as real NetCDF-4 files on a polar stereographic grid (10 km cells),
// ice thickness in metres, time in "years since 1950-01-01" (negative in the past), plus the
// parameters CSV a modeller would upload beside them.

import { mkdirSync, writeFileSync } from "node:fs";
import { join } from "node:path";
import proj4 from "proj4";
import { writeNetcdf4 } from "#app/models/model-runs/netcdf-writer.server.ts";
import {
  DEMO_ENSEMBLE,
  ensembleAges,
  memberBias,
  pointGeometry,
  runThicknessM,
  type EnsembleMember,
  type PointGeometry,
} from "./ensemble.ts";
import type { RetreatParams } from "./retreat.ts";

export const DEMO_GRID_PROJ4 = "+proj=stere +lat_0=90 +lat_ts=70 +lon_0=-45 +x_0=0 +y_0=0 +datum=WGS84 +units=m +no_defs";
const CELL_M = 10_000;
const HALF_CELLS = 70;

export interface DemoGrid {
  xs: Float64Array;
  ys: Float64Array;
  cells: PointGeometry[];
}

/** A 140 × 140 grid of 10 km cells centred on the dome. */
export function demoGrid(p: RetreatParams, halfCells = HALF_CELLS, cellM = CELL_M): DemoGrid {
  const conv = proj4("EPSG:4326", DEMO_GRID_PROJ4);
  const [cx, cy] = conv.forward([p.centreLon, p.centreLat]);
  const x0 = Math.round(cx / cellM) * cellM;
  const y0 = Math.round(cy / cellM) * cellM;
  const n = 2 * halfCells;
  const xs = Float64Array.from({ length: n }, (_, i) => x0 + (i - halfCells + 0.5) * cellM);
  const ys = Float64Array.from({ length: n }, (_, j) => y0 + (j - halfCells + 0.5) * cellM);
  const cells: PointGeometry[] = [];
  for (let j = 0; j < n; j++) {
    for (let i = 0; i < n; i++) {
      const [lon, lat] = conv.inverse([xs[i], ys[j]]);
      cells.push(pointGeometry(p, lon, lat));
    }
  }
  return { xs, ys, cells };
}

/** The demo grid's polar stereographic mapping, as CF attributes. */
const GRID_MAPPING = {
  grid_mapping_name: "polar_stereographic",
  latitude_of_projection_origin: 90,
  straight_vertical_longitude_from_pole: -45,
  standard_parallel: 70,
  false_easting: 0,
  false_northing: 0,
  semi_major_axis: 6378137,
  inverse_flattening: 298.257223563,
};

export interface GridRunSpec {
  grid: DemoGrid;
  /** The time coordinate as written, and its CF attributes (units say how it maps to cal BP). */
  time: { values: number[]; attrs: Record<string, string> };
  /** Ice thickness (m) of one cell at time slice k. */
  thicknessM: (k: number, cell: PointGeometry) => number;
  globalAttrs?: Record<string, string | number>;
  /** Leave out the x/y `axis` attributes, as many real CF files do (the bench's grid does). */
  withoutAxisAttributes?: boolean;
}

/** Writes a NetCDF-4 run on the demo's polar stereographic grid (shared by the seed and the bench). */
export async function writeGridRun(path: string, spec: GridRunSpec): Promise<void> {
  const { grid } = spec;
  const axis = (a: "X" | "Y"): Record<string, string> => (spec.withoutAxisAttributes ? {} : { axis: a });
  await writeNetcdf4(path, {
    globalAttrs: spec.globalAttrs,
    time: { name: "time", values: spec.time.values, attrs: { standard_name: "time", axis: "T", ...spec.time.attrs } },
    y: { name: "y", values: grid.ys, attrs: { standard_name: "projection_y_coordinate", units: "m", ...axis("Y") } },
    x: { name: "x", values: grid.xs, attrs: { standard_name: "projection_x_coordinate", units: "m", ...axis("X") } },
    gridMapping: { name: "polar_stereographic", attrs: GRID_MAPPING },
    ice: {
      name: "thk",
      attrs: { standard_name: "land_ice_thickness", units: "m", grid_mapping: "polar_stereographic", _FillValue: -9999 },
      slice: (k) => {
        const out = new Float32Array(grid.cells.length);
        grid.cells.forEach((g, i) => (out[i] = spec.thicknessM(k, g)));
        return out;
      },
    },
  });
}

export async function writeMemberFile(path: string, p: RetreatParams, grid: DemoGrid, m: EnsembleMember): Promise<void> {
  const ages = ensembleAges();
  const bias = memberBias(m);
  await writeGridRun(path, {
    grid,
    globalAttrs: {
      title: `${m.name}: synthetic demo run (invented)`,
      comment: `${m.description} Synthetic data for the Thawline demo, not a real model.`,
      sliding_factor: m.parameters.sliding_factor,
      ocean_melt_factor: m.parameters.ocean_melt_factor,
    },
    time: { values: ages.map((a) => -a), attrs: { units: "years since 1950-01-01", calendar: "365_day" } },
    thicknessM: (k, g) => runThicknessM(p, bias, g, ages[k]),
  });
}

/** Parameters CSV: a `run` column matching the file names, then one column per parameter. */
export function parametersCsv(members: readonly EnsembleMember[] = DEMO_ENSEMBLE): string {
  const lines = ["run,sliding_factor,ocean_melt_factor"];
  for (const m of members) lines.push(`${m.name}.nc,${m.parameters.sliding_factor},${m.parameters.ocean_melt_factor}`);
  return lines.join("\n") + "\n";
}

/** Writes every member and the parameters CSV into `dir`; returns the file paths in order. */
export async function writeDemoEnsemble(
  dir: string,
  p: RetreatParams,
  members: readonly EnsembleMember[] = DEMO_ENSEMBLE,
): Promise<string[]> {
  mkdirSync(dir, { recursive: true });
  const grid = demoGrid(p);
  const paths: string[] = [];
  for (const m of members) {
    const path = join(dir, `${m.name}.nc`);
    await writeMemberFile(path, p, grid, m);
    paths.push(path);
  }
  writeFileSync(join(dir, "parameters.csv"), parametersCsv(members));
  return paths;
}

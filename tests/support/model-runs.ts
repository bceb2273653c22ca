// Small model-run files and calendar densities for tests that score runs.
import { readFileSync } from "node:fs";
import { join } from "node:path";
import { writeNetcdf4 } from "#app/models/model-runs/netcdf-writer.server.ts";

/** A normal density N(μ, σ) as stored: Float32 little-endian from the youngest year. */
export function densityBlob(mu: number, sigma: number) {
  const start = Math.floor(mu - 5 * sigma);
  const values = new Float32Array(Math.ceil(10 * sigma));
  let t = 0;
  for (let i = 0; i < values.length; i++) t += values[i] = Math.exp(-(((start + i - mu) / sigma) ** 2) / 2);
  for (let i = 0; i < values.length; i++) values[i] /= t;
  return { start, blob: Buffer.from(values.buffer) };
}

export const RUN_AGES = [12000, 11000, 10000, 9000, 8000];

/**
 * A NetCDF-4 run on a lat/lon grid 56–58 N, 67–65 W whose ice leaves everywhere at `degl` cal BP.
 * Units "years since 1950-01-01" say how they map; any other units count model years from 12,000 cal BP.
 */
export async function writeRunFile(dir: string, name: string, degl: number, units = "years since 1950-01-01") {
  const path = join(dir, name);
  await writeNetcdf4(path, {
    time: {
      name: "time",
      values: units.startsWith("years since") ? RUN_AGES.map((a) => -a) : RUN_AGES.map((a) => 12000 - a),
      attrs: { units },
    },
    y: { name: "lat", values: [56, 57, 58], attrs: { units: "degrees_north" } },
    x: { name: "lon", values: [-67, -66, -65], attrs: { units: "degrees_east" } },
    ice: {
      name: "thk",
      attrs: { standard_name: "land_ice_thickness", units: "m" },
      slice: (k) => new Float32Array(9).fill(RUN_AGES[k] > degl ? 500 : 0),
    },
  });
  return path;
}

/** The same file as a File, as a form would send it. */
export async function runFile(dir: string, name: string, degl: number, units?: string) {
  const path = await writeRunFile(dir, name, degl, units);
  return new File([readFileSync(path)], name);
}

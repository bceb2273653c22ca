// The one entry to a model-run file, for uploads, the API and the command-line scorer: checks
// the size, tells NetCDF from GeoJSON by content, and opens it as a scoreable run.

import { closeSync, openSync, readFileSync, readSync, statSync } from "node:fs";
import { openGridRun, type GridOptions, type GridRun } from "./cf-grid.server.ts";
import { ModelRunFileError } from "./errors.ts";
import { parseMargins, type MarginsRun } from "./margins-run.ts";

/** Default upload limit for one run file (bytes); the command-line scorer has none. */
export const MODEL_RUN_MAX_BYTES = 512 * 1024 * 1024;
/** GeoJSON is parsed whole, so it has its own, smaller limit. */
export const MARGINS_MAX_BYTES = 64 * 1024 * 1024;

export type RunFile = GridRun | MarginsRun;

export interface OpenOptions extends GridOptions {
  /** Size limit in bytes; Infinity for none. */
  maxBytes?: number;
}

function sniff(path: string): "netcdf" | "geojson" {
  const fd = openSync(path, "r");
  const b = Buffer.alloc(4);
  readSync(fd, b, 0, 4, 0);
  closeSync(fd);
  if (b.toString("latin1", 0, 3) === "CDF" || b[1] === 0x48) return "netcdf";
  const first = b.toString("utf8").trimStart()[0];
  return first === "{" ? "geojson" : "netcdf";
}

export async function openRunFile(path: string, options: OpenOptions = {}): Promise<RunFile> {
  const size = statSync(path).size;
  const limit = options.maxBytes ?? MODEL_RUN_MAX_BYTES;
  const mb = (n: number) => `${(n / 1024 / 1024).toFixed(0)} MB`;
  if (size === 0) throw new ModelRunFileError("not-netcdf", "The file is empty.");
  if (size > limit) {
    throw new ModelRunFileError(
      "too-large",
      `The file is ${mb(size)}, past the ${mb(limit)} limit for one run; score larger runs where they live with npm run score.`,
    );
  }
  if (sniff(path) === "geojson") {
    const gl = Math.min(limit, MARGINS_MAX_BYTES);
    if (size > gl)
      throw new ModelRunFileError(
        "too-large",
        `GeoJSON margins of ${mb(size)} are past the ${mb(gl)} limit; use NetCDF for large runs.`,
      );
    return parseMargins(readFileSync(path, "utf8"));
  }
  return openGridRun(path, options);
}

export function closeRunFile(run: RunFile): void {
  if (run.kind === "grid") run.close();
}

// A CF-conventions NetCDF model run as a grid Thawline can score: a time axis in cal BP, grid
// axes with a way to place a site (lon/lat) on them, and a 3-D ice variable (thickness or mask)
// read one time slice at a time. Every problem becomes a ModelRunFileError naming what is wrong.

import proj4 from "proj4";
import type { IceRule } from "#app/science/scoring/grid.ts";
import { ModelRunFileError } from "./errors.ts";
import { openNetcdf, type NetcdfSource, type SourceVariable } from "./netcdf-source.server.ts";
import { cfToProj4 } from "./projection.ts";
import { mapTimeAxis } from "./time-axis.ts";

export interface GridRun {
  kind: "grid";
  encoding: NetcdfSource["encoding"];
  /** Cal BP of each slice, in file order. */
  slicesCalBp: number[];
  timeHow: string;
  xs: Float64Array;
  ys: Float64Array;
  /** Site (lon, lat) → grid coordinates; lon/lat grids shift longitudes onto the grid's range. */
  toGrid(lon: number, lat: number): [number, number];
  /** Grid coordinates → lon/lat, for drawing the margin. */
  toLonLat(x: number, y: number): [number, number];
  iceVariable: string;
  iceRule: IceRule;
  /** Slice `k` (file order), flat row-major [y][x], fill values as NaN. */
  readSlice(k: number): Float32Array | Float64Array;
  close(): void;
}

export interface GridOptions {
  /** Cal BP of model time 0, when the time units do not say. */
  timeOffset?: number | null;
  /** Ice thickness (m) above which a cell counts as ice; default 1 m. */
  thresholdM?: number;
}

export const DEFAULT_THRESHOLD_M = 1;

const str = (v: SourceVariable, k: string) => (typeof v.attrs[k] === "string" ? (v.attrs[k] as string).trim() : "");

function findVar(vars: SourceVariable[], test: (v: SourceVariable) => boolean): SourceVariable | undefined {
  return vars.find(test);
}

function findTime(vars: SourceVariable[]): SourceVariable | undefined {
  return (
    findVar(vars, (v) => v.shape.length === 1 && (str(v, "standard_name") === "time" || str(v, "axis").toUpperCase() === "T")) ??
    findVar(vars, (v) => v.shape.length === 1 && /^(time|t|age)$/i.test(v.name))
  );
}

function findAxis(
  vars: SourceVariable[],
  standard: string[],
  axis: string,
  names: RegExp,
  units?: RegExp,
): SourceVariable | undefined {
  return (
    findVar(vars, (v) => v.shape.length === 1 && standard.includes(str(v, "standard_name"))) ??
    findVar(vars, (v) => v.shape.length === 1 && !!units && units.test(str(v, "units"))) ??
    // (An empty `axis` asks for none: lon/lat are found by name, standard name or units only.)
    findVar(vars, (v) => v.shape.length === 1 && axis !== "" && str(v, "axis").toUpperCase() === axis) ??
    findVar(vars, (v) => v.shape.length === 1 && names.test(v.name))
  );
}

function findIce(vars: SourceVariable[], threshold: number): { v: SourceVariable; rule: IceRule } | undefined {
  const grids = vars.filter((v) => v.shape.length >= 3);
  const thick =
    grids.find((v) => str(v, "standard_name") === "land_ice_thickness") ??
    grids.find((v) => /^(thk|lithk|thickness|ice_thickness|H)$/i.test(v.name));
  if (thick)
    return { v: thick, rule: { kind: "thickness", thresholdM: threshold * (/^km$/i.test(str(thick, "units")) ? 0.001 : 1) } };
  const mask =
    grids.find((v) => ["land_ice_area_fraction", "land_ice_binary_mask"].includes(str(v, "standard_name"))) ??
    grids.find((v) => /mask/i.test(v.name));
  return mask ? { v: mask, rule: { kind: "mask", thresholdM: 0 } } : undefined;
}

/** Opens a NetCDF file and interprets it as a scoreable grid, or throws ModelRunFileError. */
export async function openGridRun(path: string, options: GridOptions = {}): Promise<GridRun> {
  const src = await openNetcdf(path);
  try {
    return interpret(src, options);
  } catch (e) {
    src.close();
    throw e;
  }
}

function interpret(src: NetcdfSource, options: GridOptions): GridRun {
  const vars = src.variables;
  const time = findTime(vars);
  if (!time)
    throw new ModelRunFileError(
      "no-time-axis",
      'The file has no time axis: no 1-D variable with standard_name "time", axis "T" or named time.',
    );
  const ice = findIce(vars, options.thresholdM ?? DEFAULT_THRESHOLD_M);
  if (!ice) {
    throw new ModelRunFileError(
      "no-ice-variable",
      'The file has neither an ice thickness (standard_name "land_ice_thickness") nor an ice mask (a variable with "mask" in its name or standard_name "land_ice_area_fraction").',
    );
  }
  if (ice.v.shape.length !== 3) {
    throw new ModelRunFileError(
      "bad-shape",
      `The ice variable "${ice.v.name}" has ${ice.v.shape.length} dimensions; Thawline reads (time, y, x) or (time, lat, lon).`,
    );
  }
  const raw = src.readAll(time.name);
  const mapped = mapTimeAxis(raw, str(time, "units"), options.timeOffset);
  if (!mapped.ok)
    throw new ModelRunFileError("time-mapping-needed", mapped.message, {
      units: str(time, "units"),
      first: raw[0],
      last: raw[raw.length - 1],
      n: raw.length,
    });

  const lon = findAxis(vars, ["longitude"], "", /^(lon|longitude)$/i, /^degrees?_?e(ast)?$/i);
  const lat = findAxis(vars, ["latitude"], "", /^(lat|latitude)$/i, /^degrees?_?n(orth)?$/i);
  const px = findAxis(vars, ["projection_x_coordinate"], "X", /^x$/i);
  const py = findAxis(vars, ["projection_y_coordinate"], "Y", /^y$/i);
  const gmName = str(ice.v, "grid_mapping");
  const projected = px && py && px !== lon && py !== lat;
  let xAxis: SourceVariable;
  let yAxis: SourceVariable;
  let toGrid: GridRun["toGrid"];
  let toLonLat: GridRun["toLonLat"];
  if (projected && (gmName || !(lon && lat))) {
    const gm = vars.find((v) => v.name === gmName);
    if (!gm) {
      throw new ModelRunFileError(
        "unknown-projection",
        gmName
          ? `The grid mapping variable "${gmName}" named by "${ice.v.name}" is missing.`
          : `The ice variable "${ice.v.name}" has projected x/y coordinates but no grid_mapping attribute, so the projection is unknown.`,
      );
    }
    const p = cfToProj4(gm.attrs);
    if (!p.ok) throw new ModelRunFileError("unknown-projection", p.message);
    let converter: proj4.Converter;
    try {
      converter = proj4("EPSG:4326", p.proj4);
    } catch {
      throw new ModelRunFileError("unknown-projection", `The projection "${p.proj4}" could not be set up.`);
    }
    const k = /^km$/i.test(str(px, "units")) ? 1000 : 1;
    xAxis = px;
    yAxis = py;
    toGrid = (lo, la) => {
      const [x, y] = converter.forward([lo, la]);
      return [x / k, y / k];
    };
    toLonLat = (x, y) => converter.inverse([x * k, y * k]) as [number, number];
  } else if (lon && lat) {
    xAxis = lon;
    yAxis = lat;
    const values = src.readAll(lon.name);
    const east = values.some((v) => v > 180);
    toGrid = (lo, la) => [east && lo < 0 ? lo + 360 : lo, la];
    toLonLat = (x, y) => [x > 180 ? x - 360 : x, y];
  } else {
    throw new ModelRunFileError(
      "no-coordinates",
      "The file has neither lat/lon coordinates nor projected x/y coordinates with a grid_mapping.",
    );
  }
  return build(src, ice, time, xAxis, yAxis, mapped, toGrid, toLonLat);
}

function build(
  src: NetcdfSource,
  ice: { v: SourceVariable; rule: IceRule },
  time: SourceVariable,
  xAxis: SourceVariable,
  yAxis: SourceVariable,
  mapped: { calBp: number[]; how: string },
  toGrid: GridRun["toGrid"],
  toLonLat: GridRun["toLonLat"],
): GridRun {
  const [nt, n1, n2] = ice.v.shape;
  const xs = src.readAll(xAxis.name);
  const ys = src.readAll(yAxis.name);
  const dims = ice.v.dims;
  const named = dims[1] === yAxis.name && dims[2] === xAxis.name;
  const swapped = dims[1] === xAxis.name && dims[2] === yAxis.name;
  if (nt !== mapped.calBp.length || (dims[0] !== time.name && !dims[0].startsWith("dim"))) {
    throw new ModelRunFileError("bad-shape", `The first dimension of "${ice.v.name}" is not the time axis "${time.name}".`);
  }
  if (swapped || (!named && !(n1 === ys.length && n2 === xs.length))) {
    throw new ModelRunFileError(
      "bad-shape",
      `"${ice.v.name}" must be laid out (time, ${yAxis.name}, ${xAxis.name}); its dimensions are (${dims.join(", ")}).`,
    );
  }
  if (new Set(mapped.calBp).size !== mapped.calBp.length)
    throw new ModelRunFileError("bad-shape", "Two time slices have the same time.");
  const fill = [ice.v.attrs._FillValue, ice.v.attrs.missing_value].flat().filter((v): v is number => typeof v === "number");
  const scale = typeof ice.v.attrs.scale_factor === "number" ? ice.v.attrs.scale_factor : 1;
  const add = typeof ice.v.attrs.add_offset === "number" ? ice.v.attrs.add_offset : 0;
  return {
    kind: "grid",
    encoding: src.encoding,
    slicesCalBp: mapped.calBp,
    timeHow: mapped.how,
    xs,
    ys,
    toGrid,
    toLonLat,
    iceVariable: ice.v.name,
    iceRule: ice.rule,
    readSlice: (k) => {
      const s = src.readSlice(ice.v.name, k);
      for (let i = 0; i < s.length; i++) {
        const v = s[i];
        s[i] = fill.includes(v) || Math.abs(v) > 1e30 ? Number.NaN : v * scale + add;
      }
      return s;
    },
    close: () => src.close(),
  };
}

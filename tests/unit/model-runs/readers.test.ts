import { mkdtempSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import proj4 from "proj4";
import { afterAll, describe, expect, it } from "vitest";
import { rmSync } from "node:fs";
import { openRunFile, closeRunFile, type RunFile } from "#app/models/model-runs/run-file.server.ts";
import { writeNetcdf4, type Netcdf4Spec } from "#app/models/model-runs/netcdf-writer.server.ts";
import { scoreRun } from "#app/models/model-runs/score-run.server.ts";
import { mapTimeAxis } from "#app/models/model-runs/time-axis.ts";
import { writeNetcdf3 } from "#tests/support/netcdf3-writer.ts";

const dir = mkdtempSync(join(tmpdir(), "thawline-runs-"));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

const STERE = "+proj=stere +lat_0=90 +lat_ts=70 +lon_0=-45 +datum=WGS84 +units=m +no_defs";
const SITE = { lon: -66, lat: 57 };

/** A 5 × 5 polar stereographic grid of 10 km cells centred on SITE; ice leaves at 10,000 cal BP. */
function stereSpec(overrides: Partial<Netcdf4Spec> = {}): Netcdf4Spec {
  const [cx, cy] = proj4("EPSG:4326", STERE).forward([SITE.lon, SITE.lat]);
  const axis = (c: number) => Array.from({ length: 5 }, (_, i) => c + (i - 2) * 10000);
  const ages = [12000, 11000, 10000, 9000, 8000];
  return {
    time: { name: "time", values: ages.map((a) => -a), attrs: { standard_name: "time", units: "years since 1950-01-01" } },
    y: { name: "y", values: axis(cy), attrs: { standard_name: "projection_y_coordinate", units: "m" } },
    x: { name: "x", values: axis(cx), attrs: { standard_name: "projection_x_coordinate", units: "m" } },
    gridMapping: {
      name: "crs",
      attrs: {
        grid_mapping_name: "polar_stereographic",
        latitude_of_projection_origin: 90,
        straight_vertical_longitude_from_pole: -45,
        standard_parallel: 70,
      },
    },
    ice: {
      name: "thk",
      attrs: { standard_name: "land_ice_thickness", units: "m", grid_mapping: "crs" },
      slice: (k) => new Float32Array(25).fill(ages[k] > 10000 ? 800 : 0),
    },
    ...overrides,
  };
}

async function open(path: string, opts = {}): Promise<RunFile> {
  return openRunFile(path, opts);
}

async function failure(path: string, opts = {}): Promise<{ code: string; message: string }> {
  try {
    const r = await open(path, opts);
    closeRunFile(r);
  } catch (e) {
    return e as { code: string; message: string };
  }
  throw new Error("expected the file to be refused");
}

/** A normal density around 10,100 cal BP with σ 100. */
function constraint(lon = SITE.lon, lat = SITE.lat) {
  const values = new Float32Array(1201);
  let t = 0;
  for (let i = 0; i < values.length; i++) t += values[i] = Math.exp(-(((9500 + i - 10100) / 100) ** 2) / 2);
  for (let i = 0; i < values.length; i++) values[i] /= t;
  return {
    determinationId: 1,
    latitude: lat,
    longitude: lon,
    kind: "minimum" as const,
    grade: 3,
    density: { startCalBp: 9500, values },
  };
}

describe("NetCDF-4 through h5wasm", () => {
  it("reads a polar stereographic thickness grid and places a site with proj4", async () => {
    const path = join(dir, "stere.nc");
    await writeNetcdf4(path, stereSpec());
    const run = await open(path);
    expect(run.kind).toBe("grid");
    if (run.kind !== "grid") return;
    expect(run.encoding).toBe("netcdf4");
    expect(run.slicesCalBp).toEqual([12000, 11000, 10000, 9000, 8000]);
    const [x, y] = run.toGrid(SITE.lon, SITE.lat);
    expect(x).toBeCloseTo(run.xs[2], 3);
    expect(y).toBeCloseTo(run.ys[2], 3);
    const r = await scoreRun(run, [constraint()]);
    closeRunFile(run);
    // hand: F = min(1, (11000 − t)/1000) under N(10100, 100):
    // E = 0.9 − E[(10000 − t)+]/1000 = 0.9 − 100·(φ(1) − (1 − Φ(1)))/1000 = 0.9 − 0.00833
    expect(r.scores[0].score).toBeCloseTo(0.89167, 3);
    expect(r.scores[0].modelDeglaciationCalBp).toBeCloseTo(10500, 6);
  });

  it("honours a settable thickness threshold", async () => {
    const path = join(dir, "thin.nc");
    await writeNetcdf4(
      path,
      stereSpec({
        ice: {
          name: "thk",
          attrs: { standard_name: "land_ice_thickness", units: "m", grid_mapping: "crs" },
          slice: () => new Float32Array(25).fill(5),
        },
      }),
    );
    const thin = await open(path, { thresholdM: 10 });
    const thick = await open(path, { thresholdM: 1 });
    expect((await scoreRun(thin, [constraint()])).scores[0].score).toBeCloseTo(1, 6);
    expect((await scoreRun(thick, [constraint()])).scores[0].score).toBeCloseTo(0, 6);
    closeRunFile(thin);
    closeRunFile(thick);
  });
});

describe("NetCDF-3 classic through netcdfjs", () => {
  it("reads a lat/lon ice mask with a ka BP time axis", async () => {
    const path = join(dir, "mask.nc");
    const lats = [56, 57, 58];
    const lons = [-67, -66, -65];
    const mask: number[] = [];
    for (const a of [12, 10, 8]) for (let i = 0; i < 9; i++) mask.push(a > 10 ? 1 : 0);
    writeNetcdf3(
      path,
      [
        ["time", 3],
        ["lat", 3],
        ["lon", 3],
      ],
      [
        { name: "time", dims: ["time"], type: "double", attrs: { units: "ka BP" }, data: [12, 10, 8] },
        { name: "lat", dims: ["lat"], type: "double", attrs: { units: "degrees_north" }, data: lats },
        { name: "lon", dims: ["lon"], type: "double", attrs: { units: "degrees_east" }, data: lons },
        { name: "ice_mask", dims: ["time", "lat", "lon"], type: "float", data: mask },
      ],
    );
    const run = await open(path);
    if (run.kind !== "grid") throw new Error("grid expected");
    expect(run.encoding).toBe("netcdf3");
    expect(run.slicesCalBp).toEqual([12000, 10000, 8000]);
    expect(run.iceRule.kind).toBe("mask");
    expect(Array.from(run.readSlice(0))).toEqual(new Array(9).fill(1));
    expect(Array.from(run.readSlice(2))).toEqual(new Array(9).fill(0));
    closeRunFile(run);
  });
});

describe("the time axis", () => {
  it("maps the units that say how, and asks for an offset otherwise", () => {
    expect(mapTimeAxis([-14000], "years since 1950-01-01")).toMatchObject({ ok: true, calBp: [14000] });
    expect(mapTimeAxis([14000], "years BP")).toMatchObject({ ok: true, calBp: [14000] });
    expect(mapTimeAxis([14000], "cal BP")).toMatchObject({ ok: true, calBp: [14000] });
    expect(mapTimeAxis([14], "ka BP")).toMatchObject({ ok: true, calBp: [14000] });
    expect(mapTimeAxis([14], "kyr BP")).toMatchObject({ ok: true, calBp: [14000] });
    expect(mapTimeAxis([0, 1000], "years")).toMatchObject({ ok: false });
    expect(mapTimeAxis([0, 1000], "years", 20000)).toMatchObject({ ok: true, calBp: [20000, 19000] });
    expect(mapTimeAxis([0, 1], "kyr", 20000)).toMatchObject({ ok: true, calBp: [20000, 19000] });
  });
});

describe("every bad file gets its own message", () => {
  it("no time axis", async () => {
    const path = join(dir, "notime.nc");
    writeNetcdf3(
      path,
      [
        ["lat", 2],
        ["lon", 2],
      ],
      [
        { name: "lat", dims: ["lat"], type: "double", attrs: { units: "degrees_north" }, data: [56, 57] },
        { name: "lon", dims: ["lon"], type: "double", attrs: { units: "degrees_east" }, data: [-66, -65] },
      ],
    );
    const e = await failure(path);
    expect(e.code).toBe("no-time-axis");
    expect(e.message).toMatch(/no time axis/);
  });

  it("no thickness or mask", async () => {
    const path = join(dir, "noice.nc");
    await writeNetcdf4(
      path,
      stereSpec({
        ice: { name: "temperature", attrs: { standard_name: "air_temperature", units: "K" }, slice: () => new Float32Array(25) },
      }),
    );
    const e = await failure(path);
    expect(e.code).toBe("no-ice-variable");
    expect(e.message).toMatch(/land_ice_thickness/);
  });

  it("an unknown projection", async () => {
    const path = join(dir, "rotated.nc");
    await writeNetcdf4(
      path,
      stereSpec({ gridMapping: { name: "crs", attrs: { grid_mapping_name: "rotated_latitude_longitude" } } }),
    );
    const e = await failure(path);
    expect(e.code).toBe("unknown-projection");
    expect(e.message).toMatch(/rotated_latitude_longitude/);
  });

  it("time units that do not say how they map, until a time offset is given", async () => {
    const path = join(dir, "modeltime.nc");
    const spec = stereSpec();
    await writeNetcdf4(path, { ...spec, time: { name: "time", values: [0, 1000, 2000, 3000, 4000], attrs: { units: "years" } } });
    const e = await failure(path);
    expect(e.code).toBe("time-mapping-needed");
    expect(e.message).toMatch(/time offset/);
    const run = await open(path, { timeOffset: 12000 });
    expect(run.kind === "grid" && run.slicesCalBp).toEqual([12000, 11000, 10000, 9000, 8000]);
    closeRunFile(run);
  });

  it("times that do not overlap the constraints", async () => {
    const path = join(dir, "old.nc");
    await writeNetcdf4(path, {
      ...stereSpec(),
      time: { name: "time", values: [-50000, -49000, -48000, -47000, -46000], attrs: { units: "years since 1950-01-01" } },
    });
    const run = await open(path);
    await expect(scoreRun(run, [constraint()])).rejects.toThrow(/do not overlap/);
    closeRunFile(run);
  });

  it("constraints off the grid", async () => {
    const path = join(dir, "elsewhere.nc");
    await writeNetcdf4(path, stereSpec());
    const run = await open(path);
    await expect(scoreRun(run, [constraint(10, 45)])).rejects.toThrow(/inside the run's grid/);
    closeRunFile(run);
  });

  it("a file past the size limit", async () => {
    const path = join(dir, "big.nc");
    await writeNetcdf4(path, stereSpec());
    const e = await failure(path, { maxBytes: 100 });
    expect(e.code).toBe("too-large");
    expect(e.message).toMatch(/limit/);
  });

  it("a file that is not NetCDF", async () => {
    const path = join(dir, "text.nc");
    writeFileSync(path, "run,score\n");
    const e = await failure(path);
    expect(e.code).toBe("not-netcdf");
  });

  it("GeoJSON margins without ages or with the wrong geometry, every feature named", async () => {
    const path = join(dir, "bad.geojson");
    writeFileSync(
      path,
      JSON.stringify({
        type: "FeatureCollection",
        features: [
          {
            type: "Feature",
            properties: {},
            geometry: {
              type: "Polygon",
              coordinates: [
                [
                  [0, 0],
                  [1, 0],
                  [1, 1],
                  [0, 0],
                ],
              ],
            },
          },
          { type: "Feature", properties: { age_cal_bp: 10000 }, geometry: { type: "Point", coordinates: [0, 0] } },
        ],
      }),
    );
    const e = await failure(path);
    expect(e.code).toBe("bad-geojson");
    expect(e.message).toMatch(/Feature 1: no numeric age_cal_bp/);
    expect(e.message).toMatch(/Feature 2: geometry is Point/);
  });
});

describe("GeoJSON margins", () => {
  it("scores a site under a margin that disappears", async () => {
    const path = join(dir, "margins.geojson");
    const square = [
      [
        [-67, 56],
        [-65, 56],
        [-65, 58],
        [-67, 58],
        [-67, 56],
      ],
    ];
    writeFileSync(
      path,
      JSON.stringify({
        type: "FeatureCollection",
        features: [
          { type: "Feature", properties: { age_cal_bp: 11000 }, geometry: { type: "Polygon", coordinates: square } },
          { type: "Feature", properties: { age_cal_bp: 10000 }, geometry: null },
        ],
      }),
    );
    const run = await open(path);
    expect(run.kind).toBe("margins");
    const r = await scoreRun(run, [constraint()]);
    // hand: in the span (10,000–11,000) F = (11000 − t)/1000: (900·Φ(1) − 100·φ(1))/1000 = 0.7330;
    // below 10,000 the run has no slice, scored F = 1/2: 0.5·(1 − Φ(1)) = 0.0793
    expect(r.scores[0].score).toBeCloseTo(0.8123, 2);
  });
});

// Writes a CF-conventions NetCDF-4 model run through h5wasm: coordinate variables as HDF5
// dimension scales (how NetCDF-4 stores dimensions), an optional grid_mapping variable, and a
// (time, y, x) ice variable written one slice at a time.

import h5wasm from "h5wasm/node";

export interface AxisSpec {
  name: string;
  values: ArrayLike<number>;
  attrs: Record<string, string | number>;
}

export interface Netcdf4Spec {
  time: AxisSpec;
  y: AxisSpec;
  x: AxisSpec;
  gridMapping?: { name: string; attrs: Record<string, string | number> };
  ice: { name: string; attrs: Record<string, string | number>; slice: (k: number) => Float32Array };
  globalAttrs?: Record<string, string | number>;
  /** gzip level 0–9; default 4. */
  compression?: number;
}

function setAttrs(
  target: { create_attribute(name: string, data: string | number | Float64Array | Float32Array): void },
  attrs: Record<string, string | number>,
  floatAttrs = new Set<string>(),
) {
  for (const [k, v] of Object.entries(attrs)) {
    if (typeof v === "string") target.create_attribute(k, v);
    else target.create_attribute(k, floatAttrs.has(k) ? new Float32Array([v]) : new Float64Array([v]));
  }
}

export async function writeNetcdf4(path: string, spec: Netcdf4Spec): Promise<void> {
  await h5wasm.ready;
  const f = new h5wasm.File(path, "w");
  try {
    setAttrs(f, { Conventions: "CF-1.8", ...(spec.globalAttrs ?? {}) });
    for (const axis of [spec.time, spec.y, spec.x]) {
      const d = f.create_dataset({ name: axis.name, data: Float64Array.from(axis.values), shape: [axis.values.length] });
      d.make_scale(axis.name);
      setAttrs(d, axis.attrs);
    }
    if (spec.gridMapping) {
      const gm = f.create_dataset({ name: spec.gridMapping.name, data: new Int32Array([0]), shape: [] });
      setAttrs(gm, spec.gridMapping.attrs);
    }
    const nt = spec.time.values.length;
    const ny = spec.y.values.length;
    const nx = spec.x.values.length;
    const ice = f.create_dataset({
      name: spec.ice.name,
      data: new Float32Array(nt * ny * nx),
      shape: [nt, ny, nx],
      dtype: "<f",
      chunks: [1, ny, nx],
      compression: spec.compression ?? 4,
    });
    ice.attach_scale(0, spec.time.name);
    ice.attach_scale(1, spec.y.name);
    ice.attach_scale(2, spec.x.name);
    setAttrs(ice, spec.ice.attrs, new Set(["_FillValue"]));
    for (let k = 0; k < nt; k++) ice.write_slice([[k, k + 1], [], []], spec.ice.slice(k));
  } finally {
    f.close();
  }
}

// One view over the two NetCDF encodings: NetCDF-4 (HDF5, through h5wasm) and NetCDF-3 classic
// (its header through netcdfjs, its data read from the file at the offsets the header gives).
// Coordinates are read whole; gridded variables one index of their first dimension at a time,
// so memory stays bounded by one slice whatever the number of time slices.

import { closeSync, openSync, readSync, fstatSync } from "node:fs";
import h5wasm from "h5wasm/node";
import { NetCDFReader } from "netcdfjs";
import { ModelRunFileError } from "./errors.ts";

export type AttrValue = string | number | number[];

export interface SourceVariable {
  name: string;
  dims: string[];
  shape: number[];
  attrs: Record<string, AttrValue>;
}

export interface NetcdfSource {
  encoding: "netcdf4" | "netcdf3";
  variables: SourceVariable[];
  globalAttrs: Record<string, AttrValue>;
  /** The whole of a (small) variable, as numbers. */
  readAll(name: string): Float64Array;
  /** Index `k` of the variable's first dimension, flattened row-major. */
  readSlice(name: string, k: number): Float32Array | Float64Array;
  close(): void;
}

const HDF5_SIGNATURE = [0x89, 0x48, 0x44, 0x46];

/** Opens a NetCDF file by sniffing its first bytes. */
export async function openNetcdf(path: string): Promise<NetcdfSource> {
  const fd = openSync(path, "r");
  const head = Buffer.alloc(8);
  readSync(fd, head, 0, 8, 0);
  closeSync(fd);
  if (HDF5_SIGNATURE.every((b, i) => head[i] === b)) return openHdf5(path);
  if (head[0] === 0x43 && head[1] === 0x44 && head[2] === 0x46 && (head[3] === 1 || head[3] === 2)) return openClassic(path);
  throw new ModelRunFileError(
    "not-netcdf",
    "The file is neither NetCDF-4 (HDF5) nor NetCDF-3 classic: its first bytes match neither format.",
  );
}

function plainValue(v: unknown): AttrValue {
  if (typeof v === "string" || typeof v === "number") return v;
  if (typeof v === "bigint") return Number(v);
  if (Array.isArray(v) || ArrayBuffer.isView(v)) {
    const arr = Array.from(v as ArrayLike<number | bigint | string>);
    if (arr.length && typeof arr[0] === "string") return arr.join("");
    const nums = arr.map(Number);
    return nums.length === 1 ? nums[0] : nums;
  }
  return String(v);
}

async function openHdf5(path: string): Promise<NetcdfSource> {
  await h5wasm.ready;
  let file: InstanceType<typeof h5wasm.File>;
  try {
    file = new h5wasm.File(path, "r");
  } catch {
    throw new ModelRunFileError(
      "not-netcdf",
      "The file starts like NetCDF-4 (HDF5) but could not be opened: it may be truncated.",
    );
  }
  const variables: SourceVariable[] = [];
  for (const name of file.keys()) {
    const entity = file.get(name);
    if (!(entity instanceof h5wasm.Dataset)) continue;
    const shape = entity.shape ?? [];
    const attrs: Record<string, AttrValue> = {};
    for (const [k, a] of Object.entries(entity.attrs)) {
      if (["DIMENSION_LIST", "REFERENCE_LIST", "CLASS", "NAME", "_Netcdf4Dimid", "_Netcdf4Coordinates"].includes(k)) continue;
      attrs[k] = plainValue(a.value);
    }
    const dims = shape.map((_, i) => {
      const scales = shape.length > 0 ? entity.get_attached_scales(i) : [];
      return scales.length ? scales[0].replace(/^\//, "") : shape.length === 1 ? name : `dim${i}`;
    });
    variables.push({ name, dims, shape, attrs });
  }
  const globalAttrs: Record<string, AttrValue> = {};
  for (const [k, a] of Object.entries(file.attrs)) globalAttrs[k] = plainValue(a.value);
  // One handle per variable: opening a dataset reads its metadata, too slow to repeat per slice.
  const handles = new Map<string, InstanceType<typeof h5wasm.Dataset>>();
  const dataset = (name: string) => {
    let d = handles.get(name);
    if (!d) handles.set(name, (d = file.get(name) as InstanceType<typeof h5wasm.Dataset>));
    return d;
  };
  return {
    encoding: "netcdf4",
    variables,
    globalAttrs,
    readAll: (name) => Float64Array.from(dataset(name).value as ArrayLike<number>, Number),
    readSlice: (name, k) => {
      const out = dataset(name).slice([[k, k + 1]]);
      return out instanceof Float32Array || out instanceof Float64Array
        ? out
        : Float32Array.from(out as ArrayLike<number>, Number);
    },
    close: () => void file.close(),
  };
}

const CLASSIC_TYPES: Record<string, { size: number; read: (b: Buffer, o: number) => number }> = {
  byte: { size: 1, read: (b, o) => b.readInt8(o) },
  char: { size: 1, read: (b, o) => b.readUInt8(o) },
  short: { size: 2, read: (b, o) => b.readInt16BE(o) },
  int: { size: 4, read: (b, o) => b.readInt32BE(o) },
  float: { size: 4, read: (b, o) => b.readFloatBE(o) },
  double: { size: 8, read: (b, o) => b.readDoubleBE(o) },
};

/** Reads the classic header from a growing prefix of the file, then serves slices by offset. */
function openClassic(path: string): NetcdfSource {
  const fd = openSync(path, "r");
  const size = fstatSync(fd).size;
  const reader = readClassicHeader(fd, size);
  return classicSource(fd, reader);
}

function readClassicHeader(fd: number, size: number): NetCDFReader {
  for (let n = Math.min(size, 64 * 1024); ; n = Math.min(size, n * 4)) {
    const buf = Buffer.alloc(n);
    readSync(fd, buf, 0, n, 0);
    try {
      return new NetCDFReader(buf);
    } catch (e) {
      if (n >= size) {
        closeSync(fd);
        throw new ModelRunFileError("not-netcdf", `The NetCDF-3 header could not be read: ${(e as Error).message}`);
      }
    }
  }
}

function classicSource(fd: number, reader: NetCDFReader): NetcdfSource {
  const h = reader.header;
  const recordLength = h.recordDimension.length;
  const recordStep = h.recordDimension.recordStep ?? 0;
  const variables: SourceVariable[] = h.variables.map((v) => {
    const dims = v.dimensions.map((id) => h.dimensions[id].name);
    const shape = v.dimensions.map((id) => (id === h.recordDimension.id ? recordLength : h.dimensions[id].size));
    const attrs: Record<string, AttrValue> = {};
    for (const a of v.attributes as { name: string; value: unknown }[]) attrs[a.name] = plainValue(a.value);
    return { name: v.name, dims, shape, attrs };
  });
  const globalAttrs: Record<string, AttrValue> = {};
  for (const a of h.globalAttributes) globalAttrs[a.name] = plainValue(a.value);
  const meta = (name: string) => {
    const i = h.variables.findIndex((v) => v.name === name);
    if (i < 0) throw new Error(`No variable ${name}.`);
    return { v: h.variables[i], info: variables[i], type: CLASSIC_TYPES[h.variables[i].type] };
  };
  const read = (offset: number, count: number, type: (typeof CLASSIC_TYPES)[string], out: Float32Array | Float64Array) => {
    const buf = Buffer.alloc(count * type.size);
    readSync(fd, buf, 0, buf.length, offset);
    for (let i = 0; i < count; i++) out[i] = type.read(buf, i * type.size);
    return out;
  };
  const sliceCount = (shape: number[]) => shape.slice(1).reduce((a, b) => a * b, 1);
  return {
    encoding: "netcdf3",
    variables,
    globalAttrs,
    readAll: (name) => {
      const { v, info, type } = meta(name);
      const n = info.shape.reduce((a, b) => a * b, 1);
      if (!v.record) return read(v.offset, n, type, new Float64Array(n)) as Float64Array;
      const out = new Float64Array(n);
      const per = sliceCount(info.shape);
      for (let k = 0; k < info.shape[0]; k++) out.set(read(v.offset + k * recordStep, per, type, new Float64Array(per)), k * per);
      return out;
    },
    readSlice: (name, k) => {
      const { v, info, type } = meta(name);
      const per = sliceCount(info.shape);
      const offset = v.record ? v.offset + k * recordStep : v.offset + k * per * type.size;
      const out = type.size === 8 ? new Float64Array(per) : new Float32Array(per);
      return read(offset, per, type, out);
    },
    close: () => closeSync(fd),
  };
}

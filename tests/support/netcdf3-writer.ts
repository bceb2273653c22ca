// A minimal NetCDF-3 classic writer for tests (fixed-size dimensions, float/double variables,
// text or double attributes), hand-encoded from the published classic format: header of
// dimensions, global attributes and variables with their offsets, then the data, big-endian.

import { writeFileSync } from "node:fs";

export interface Nc3Variable {
  name: string;
  dims: string[];
  type: "float" | "double";
  attrs?: Record<string, string | number>;
  data: ArrayLike<number>;
}

const NC_DIMENSION = 0x0a;
const NC_VARIABLE = 0x0b;
const NC_ATTRIBUTE = 0x0c;
const TYPE = { char: 2, float: 5, double: 6 } as const;

class Writer {
  parts: Buffer[] = [];
  int(v: number) {
    const b = Buffer.alloc(4);
    b.writeInt32BE(v);
    this.parts.push(b);
  }
  bytes(b: Buffer) {
    this.parts.push(b);
    const pad = (4 - (b.length % 4)) % 4;
    if (pad) this.parts.push(Buffer.alloc(pad));
  }
  name(s: string) {
    const b = Buffer.from(s, "utf8");
    this.int(b.length);
    this.bytes(b);
  }
  get length() {
    return this.parts.reduce((n, p) => n + p.length, 0);
  }
}

function attrs(w: Writer, a: Record<string, string | number> | undefined) {
  const entries = Object.entries(a ?? {});
  if (!entries.length) {
    w.int(0);
    w.int(0);
    return;
  }
  w.int(NC_ATTRIBUTE);
  w.int(entries.length);
  for (const [k, v] of entries) {
    w.name(k);
    if (typeof v === "string") {
      w.int(TYPE.char);
      const b = Buffer.from(v, "utf8");
      w.int(b.length);
      w.bytes(b);
    } else {
      w.int(TYPE.double);
      w.int(1);
      const b = Buffer.alloc(8);
      b.writeDoubleBE(v);
      w.bytes(b);
    }
  }
}

function header(dims: [string, number][], gatts: Record<string, string | number>, vars: Nc3Variable[], begins: number[]): Writer {
  const w = new Writer();
  w.bytes(Buffer.from([0x43, 0x44, 0x46, 0x01]));
  w.int(0); // numrecs: no record dimension
  w.int(NC_DIMENSION);
  w.int(dims.length);
  for (const [n, len] of dims) {
    w.name(n);
    w.int(len);
  }
  attrs(w, gatts);
  w.int(NC_VARIABLE);
  w.int(vars.length);
  vars.forEach((v, i) => {
    w.name(v.name);
    w.int(v.dims.length);
    for (const d of v.dims) w.int(dims.findIndex(([n]) => n === d));
    attrs(w, v.attrs);
    w.int(TYPE[v.type]);
    const size = v.data.length * (v.type === "float" ? 4 : 8);
    w.int(size + ((4 - (size % 4)) % 4));
    w.int(begins[i]);
  });
  return w;
}

export function writeNetcdf3(
  path: string,
  dims: [string, number][],
  vars: Nc3Variable[],
  gatts: Record<string, string | number> = {},
) {
  const placeholder = header(
    dims,
    gatts,
    vars,
    vars.map(() => 0),
  );
  let offset = placeholder.length;
  const begins = vars.map((v) => {
    const b = offset;
    const size = v.data.length * (v.type === "float" ? 4 : 8);
    offset += size + ((4 - (size % 4)) % 4);
    return b;
  });
  const w = header(dims, gatts, vars, begins);
  for (const v of vars) {
    const size = v.type === "float" ? 4 : 8;
    const b = Buffer.alloc(v.data.length * size);
    for (let i = 0; i < v.data.length; i++) {
      if (v.type === "float") b.writeFloatBE(v.data[i], i * 4);
      else b.writeDoubleBE(v.data[i], i * 8);
    }
    w.bytes(b);
  }
  writeFileSync(path, Buffer.concat(w.parts));
}

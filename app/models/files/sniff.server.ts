// What an uploaded file really is, from its bytes rather than its name: spreadsheets (xlsx, other
// zip archives), text (CSV) and its encoding, NetCDF-3 and HDF5 (NetCDF-4) model output, GeoJSON.
// Reads the first 64 KiB and, for zip archives, the central directory at the end; never the whole file.

import { open } from "node:fs/promises";

export type FileKind =
  | "xlsx"
  | "zip"
  | "csv"
  | "geojson"
  | "json"
  | "netcdf3"
  | "hdf5"
  | "empty"
  /** Text with control characters in it, or bytes no known kind starts with. */
  | "binary"
  /** A known kind the registry never takes (PDF, images, old Excel …); `describe` names it. */
  | "other";

export type TextEncoding = "utf-8" | "utf-16le" | "utf-16be" | "windows-1252";

export type Sniffed = {
  kind: FileKind;
  /** "an Excel workbook (.xlsx)", "a PDF" … for messages: "This looks like {describe}." */
  describe: string;
  /** For text kinds: how the bytes are to be decoded, and whether a byte-order mark leads them. */
  encoding?: TextEncoding;
  bom?: boolean;
  /** For zip kinds: the entry names of the central directory (at most 1,000). */
  entries?: string[];
};

const HEAD_BYTES = 64 * 1024;
/** End-of-central-directory record (22 bytes) plus the longest zip comment. */
const TAIL_BYTES = 22 + 65_535;

const OTHER: { bytes: number[]; what: string }[] = [
  { bytes: [0x25, 0x50, 0x44, 0x46], what: "a PDF" },
  { bytes: [0xd0, 0xcf, 0x11, 0xe0], what: "an old-style Excel (.xls) or Word file" },
  { bytes: [0x89, 0x50, 0x4e, 0x47], what: "a PNG image" },
  { bytes: [0xff, 0xd8, 0xff], what: "a JPEG image" },
  { bytes: [0x47, 0x49, 0x46, 0x38], what: "a GIF image" },
  { bytes: [0x1f, 0x8b], what: "a gzip archive" },
  { bytes: [0x7b, 0x5c, 0x72, 0x74, 0x66], what: "an RTF document" },
  { bytes: [0x37, 0x7a, 0xbc, 0xaf], what: "a 7-Zip archive" },
  { bytes: [0x52, 0x61, 0x72, 0x21], what: "a RAR archive" },
];

const HDF5 = [0x89, 0x48, 0x44, 0x46, 0x0d, 0x0a, 0x1a, 0x0a];

const at = (buf: Uint8Array, offset: number, bytes: number[]) => bytes.every((b, i) => buf[offset + i] === b);

/** Names in a zip's central directory, read from the archive's last bytes; null when there is none. */
export function zipEntryNames(tail: Buffer, max = 1000): string[] | null {
  let eocd = -1;
  for (let i = tail.length - 22; i >= 0; i--) {
    if (tail.readUInt32LE(i) === 0x06054b50) {
      eocd = i;
      break;
    }
  }
  if (eocd < 0) return null;
  const count = tail.readUInt16LE(eocd + 10);
  const dirSize = tail.readUInt32LE(eocd + 12);
  // The directory sits just before the end record; find it in the tail we have.
  let p = eocd - dirSize;
  if (p < 0) return [];
  const names: string[] = [];
  for (let k = 0; k < count && names.length < max && p + 46 <= eocd; k++) {
    if (tail.readUInt32LE(p) !== 0x02014b50) break;
    const nameLen = tail.readUInt16LE(p + 28);
    const extraLen = tail.readUInt16LE(p + 30);
    const commentLen = tail.readUInt16LE(p + 32);
    names.push(tail.toString("utf8", p + 46, p + 46 + nameLen));
    p += 46 + nameLen + extraLen + commentLen;
  }
  return names;
}

/** The encoding of text bytes, or null when they are not text (a NUL, or many control characters). */
export function textEncoding(head: Buffer, complete: boolean): { encoding: TextEncoding; bom: boolean } | null {
  if (at(head, 0, [0xef, 0xbb, 0xbf])) return { encoding: "utf-8", bom: true };
  if (at(head, 0, [0xff, 0xfe])) return { encoding: "utf-16le", bom: true };
  if (at(head, 0, [0xfe, 0xff])) return { encoding: "utf-16be", bom: true };
  let control = 0;
  for (const c of head) {
    if (c === 0) return null;
    if (c < 9 || (c > 13 && c < 32)) control++;
  }
  if (control > head.length * 0.05) return null;
  try {
    // stream: a character cut by the end of the sample is not an error unless the file ends there.
    new TextDecoder("utf-8", { fatal: true }).decode(head, { stream: !complete });
    return { encoding: "utf-8", bom: false };
  } catch {
    return { encoding: "windows-1252", bom: false };
  }
}

function decodeHead(head: Buffer, encoding: TextEncoding, bom: boolean): string {
  const bytes = bom ? head.subarray(encoding === "utf-8" ? 3 : 2) : head;
  return new TextDecoder(encoding).decode(bytes);
}

const GEOJSON_TYPE =
  /"type"\s*:\s*"(FeatureCollection|Feature|Polygon|MultiPolygon|LineString|MultiLineString|Point|MultiPoint|GeometryCollection)"/;

/**
 * What the bytes are. `head` is the start of the file (up to 64 KiB), `tail` its end (for the zip
 * directory; may be the same buffer for a small file), `size` the whole file's length.
 */
export function sniffBytes(head: Buffer, tail: Buffer, size: number): Sniffed {
  if (size === 0) return { kind: "empty", describe: "an empty file" };
  if (at(head, 0, [0x50, 0x4b, 0x03, 0x04]) || at(head, 0, [0x50, 0x4b, 0x05, 0x06])) {
    const entries = zipEntryNames(tail) ?? [];
    const isWorkbook = entries.includes("[Content_Types].xml") && entries.some((n) => n.startsWith("xl/"));
    return isWorkbook
      ? { kind: "xlsx", describe: "an Excel workbook (.xlsx)", entries }
      : { kind: "zip", describe: "a zip archive that is not an Excel workbook", entries };
  }
  if (at(head, 0, [0x43, 0x44, 0x46]) && [1, 2, 5].includes(head[3] ?? 0)) {
    return { kind: "netcdf3", describe: "a NetCDF-3 (classic) file" };
  }
  for (const offset of [0, 512, 1024, 2048, 4096, 8192, 16384, 32768]) {
    if (offset + HDF5.length <= head.length && at(head, offset, HDF5)) {
      return { kind: "hdf5", describe: "an HDF5 (NetCDF-4) file" };
    }
  }
  const known = OTHER.find((m) => at(head, 0, m.bytes));
  if (known) return { kind: "other", describe: known.what };
  const text = textEncoding(head, head.length >= size);
  if (!text) return { kind: "binary", describe: "binary data" };
  const start = decodeHead(head, text.encoding, text.bom).trimStart();
  if (start.startsWith("{") || start.startsWith("[")) {
    return GEOJSON_TYPE.test(start)
      ? { kind: "geojson", describe: "GeoJSON", ...text }
      : { kind: "json", describe: "JSON that is not GeoJSON", ...text };
  }
  return { kind: "csv", describe: "text (CSV)", ...text };
}

/** Sniffs a file on disk: reads its first 64 KiB and, for a zip, its last 64 KiB. */
export async function sniffFile(path: string): Promise<Sniffed> {
  const handle = await open(path, "r");
  try {
    const { size } = await handle.stat();
    const head = Buffer.alloc(Math.min(size, HEAD_BYTES));
    await handle.read(head, 0, head.length, 0);
    let tail = head;
    if (size > head.length && at(head, 0, [0x50, 0x4b])) {
      tail = Buffer.alloc(Math.min(size, TAIL_BYTES));
      await handle.read(tail, 0, tail.length, size - tail.length);
    }
    return sniffBytes(head, tail, size);
  } finally {
    await handle.close();
  }
}

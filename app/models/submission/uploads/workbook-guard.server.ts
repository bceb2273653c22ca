// Limits on what an .xlsx upload may expand to, checked before the workbook is read: a workbook is
// a zip, and a small zip can hold gigabytes ("zip bomb") or a sheet of a million empty rows. Every
// entry is inflated as a stream (fflate) and counted — never trusting the sizes the zip declares —
// and the count stops at the first limit passed.

import { Inflate } from "fflate";

export type WorkbookLimits = { maxExpandedBytes: number; maxRows: number; maxCells: number; maxEntries: number };

export const WORKBOOK_LIMITS: WorkbookLimits = {
  maxExpandedBytes: 100 * 1024 * 1024,
  // The reader keeps at most 50,000 data rows; a header and a few blank rows may come with them.
  maxRows: 50_100,
  maxCells: 2_500_000,
  maxEntries: 2_000,
};

export class WorkbookTooLarge extends Error {}

type Entry = { name: string; method: number; start: number; compressed: number };

function entries(zip: Uint8Array): Entry[] {
  const view = new DataView(zip.buffer, zip.byteOffset, zip.byteLength);
  let eocd = -1;
  for (let i = zip.length - 22; i >= Math.max(0, zip.length - 65_557); i--) {
    if (view.getUint32(i, true) === 0x06054b50) {
      eocd = i;
      break;
    }
  }
  if (eocd < 0) throw new Error("not a zip archive");
  const count = view.getUint16(eocd + 10, true);
  let p = view.getUint32(eocd + 16, true);
  const out: Entry[] = [];
  const decoder = new TextDecoder();
  for (let k = 0; k < count; k++) {
    if (p + 46 > zip.length || view.getUint32(p, true) !== 0x02014b50) throw new Error("damaged zip directory");
    const method = view.getUint16(p + 10, true);
    const compressed = view.getUint32(p + 20, true);
    const nameLen = view.getUint16(p + 28, true);
    const extraLen = view.getUint16(p + 30, true);
    const commentLen = view.getUint16(p + 32, true);
    const local = view.getUint32(p + 42, true);
    const name = decoder.decode(zip.subarray(p + 46, p + 46 + nameLen));
    if (local + 30 > zip.length) throw new Error("damaged zip entry");
    const start = local + 30 + view.getUint16(local + 26, true) + view.getUint16(local + 28, true);
    out.push({ name, method, start, compressed: Math.min(compressed, zip.length - start) });
    p += 46 + nameLen + extraLen + commentLen;
  }
  return out;
}

/** Counts `<row` and `<c` elements across chunk boundaries. */
function elementCounter() {
  let carry = "";
  const counts = { rows: 0, cells: 0 };
  return {
    counts,
    push(chunk: Uint8Array) {
      // latin1 keeps one character per byte, enough to find ASCII tags.
      const text = carry + Buffer.from(chunk.buffer, chunk.byteOffset, chunk.byteLength).toString("latin1");
      for (const m of text.matchAll(/<(row|c)[\s>/]/g)) {
        if (m[1] === "row") counts.rows++;
        else counts.cells++;
      }
      carry = text.slice(-4);
    },
  };
}

/**
 * Throws WorkbookTooLarge (with a message for people) when the workbook expands past the limits;
 * other errors mean the zip itself is damaged.
 */
export function checkWorkbook(zip: Uint8Array, limits: WorkbookLimits = WORKBOOK_LIMITS): void {
  const list = entries(zip);
  if (list.length > limits.maxEntries) {
    throw new WorkbookTooLarge(
      `The workbook holds ${list.length} parts; a spreadsheet upload may hold at most ${limits.maxEntries}.`,
    );
  }
  let expanded = 0;
  const mb = (n: number) => `${Math.round(n / 1024 / 1024)} MB`;
  for (const entry of list) {
    const isSheet = /^xl\/worksheets\/[^/]+\.xml$/.test(entry.name);
    const counter = isSheet ? elementCounter() : null;
    const onChunk = (chunk: Uint8Array) => {
      expanded += chunk.length;
      if (expanded > limits.maxExpandedBytes) {
        throw new WorkbookTooLarge(
          `The workbook expands to more than ${mb(limits.maxExpandedBytes)} when unpacked; a spreadsheet upload may not. Save it as CSV or split it.`,
        );
      }
      if (!counter) return;
      counter.push(chunk);
      if (counter.counts.rows > limits.maxRows) {
        throw new WorkbookTooLarge(
          `The sheet ${entry.name.replace(/^xl\/worksheets\//, "")} has more than ${limits.maxRows.toLocaleString("en")} rows (empty rows with formatting count too); at most 50,000 rows are read at once. Delete the empty rows below your data, or split the file.`,
        );
      }
      if (counter.counts.cells > limits.maxCells) {
        throw new WorkbookTooLarge(
          `The sheet ${entry.name.replace(/^xl\/worksheets\//, "")} has more than ${limits.maxCells.toLocaleString("en")} cells; split the file.`,
        );
      }
    };
    const data = zip.subarray(entry.start, entry.start + entry.compressed);
    if (entry.method === 0) {
      onChunk(data);
    } else if (entry.method === 8) {
      const inflate = new Inflate((chunk) => onChunk(chunk));
      const step = 64 * 1024;
      for (let i = 0; i < data.length; i += step) inflate.push(data.subarray(i, i + step), i + step >= data.length);
      if (data.length === 0) inflate.push(new Uint8Array(0), true);
    } else {
      throw new Error(`unsupported compression method ${entry.method} in ${entry.name}`);
    }
  }
}

// Reading an uploaded CSV or XLSX file into stored rows: size limit, content sniffing, text decoding,
// formula cells. Nothing here touches the database.

import zlib from "node:zlib";
import Papa from "papaparse";
import { readSheet } from "read-excel-file/node";
import type { UploadRowError } from "#app/db/schema.ts";
import { env } from "#app/utils/env.server.ts";
import { checkWorkbook, WorkbookTooLarge } from "#app/models/submission/uploads/workbook-guard.server.ts";
import type { UploadPreview } from "#app/models/submission/uploads/validate.server.ts";
import { formatBytes } from "#app/utils/format-bytes.ts";

/** A problem with the file itself (size, kind, unreadable); `status` is the HTTP answer. */
export class UploadError extends Error {
  constructor(
    message: string,
    public status = 400,
  ) {
    super(message);
  }
}

/**
 * A cell as stored in upload_batches.payload (JSON): dates and formula cells are tagged so
 * validation can still say "this is a date" or "formulas are not accepted" after a reload.
 */
export type StoredCell = string | number | boolean | null | { date: string } | { formula: true };
export type StoredRow = { n: number; cells: StoredCell[] };
/** payload[0]: the header row (n = its spreadsheet row) with what the reader noticed. */
export type PayloadHead = StoredRow & { notices: string[]; warnings?: UploadRowError[]; preview?: UploadPreview };

export type ParsedSheet = { kind: "csv" | "xlsx"; headers: string[]; headerRow: number; rows: StoredRow[]; notices: string[] };

export const MAX_ROWS = 50_000;

export function checkFileSize(size: number, max = env().UPLOAD_MAX_BYTES): void {
  if (size > max) {
    throw new UploadError(
      `The file is ${formatBytes(size)}; the limit is ${formatBytes(max)}. Split it into several files.`,
      413,
    );
  }
}

const MAGIC: { bytes: number[]; what: string }[] = [
  { bytes: [0x25, 0x50, 0x44, 0x46], what: "a PDF" },
  { bytes: [0xd0, 0xcf, 0x11, 0xe0], what: "an old-style Excel (.xls) or Word file; save it as .xlsx or CSV" },
  { bytes: [0x89, 0x50, 0x4e, 0x47], what: "a PNG image" },
  { bytes: [0xff, 0xd8, 0xff], what: "a JPEG image" },
  { bytes: [0x47, 0x49, 0x46, 0x38], what: "a GIF image" },
  { bytes: [0x1f, 0x8b], what: "a gzip archive" },
  { bytes: [0x7b, 0x5c, 0x72, 0x74, 0x66], what: "an RTF document" },
];

function startsWith(buf: Buffer, bytes: number[]): boolean {
  return bytes.every((b, i) => buf[i] === b);
}

/** Reads a CSV or XLSX upload. Never throws anything but UploadError. */
export async function readUpload(file: Buffer, fileName: string): Promise<ParsedSheet> {
  checkFileSize(file.length);
  if (file.length === 0) throw new UploadError("The file is empty.");
  const known = MAGIC.find((m) => startsWith(file, m.bytes));
  if (known) throw new UploadError(`This is not a spreadsheet: it looks like ${known.what}. Upload a CSV or .xlsx file.`);
  const isZip = startsWith(file, [0x50, 0x4b, 0x03, 0x04]);
  if (isZip) return readXlsx(file);
  if (/\.xlsx$/i.test(fileName))
    throw new UploadError("This file is named .xlsx but is not an Excel workbook. Save it again as .xlsx or CSV.");
  return readCsv(file);
}

function decodeText(file: Buffer): { text: string; notices: string[] } {
  if (startsWith(file, [0xef, 0xbb, 0xbf])) return { text: file.subarray(3).toString("utf8"), notices: [] };
  if (startsWith(file, [0xff, 0xfe])) {
    return {
      text: new TextDecoder("utf-16le").decode(file.subarray(2)),
      notices: ["The file is in UTF-16; it was read as such."],
    };
  }
  if (startsWith(file, [0xfe, 0xff])) {
    return {
      text: new TextDecoder("utf-16be").decode(file.subarray(2)),
      notices: ["The file is in UTF-16; it was read as such."],
    };
  }
  try {
    return { text: new TextDecoder("utf-8", { fatal: true }).decode(file), notices: [] };
  } catch {
    return {
      text: new TextDecoder("windows-1252").decode(file),
      notices: [
        "The file is not UTF-8; it was read as Latin-1 (Windows-1252). Check that names with accents (é, ø, ü) look right below; saving as “CSV UTF-8” avoids this.",
      ],
    };
  }
}

function looksBinary(text: string): boolean {
  const sample = text.slice(0, 4096);
  let control = 0;
  for (let i = 0; i < sample.length; i++) {
    const c = sample.charCodeAt(i);
    if (c === 0) return true;
    if (c < 9 || (c > 13 && c < 32)) control++;
  }
  return control > sample.length * 0.05;
}

function readCsv(file: Buffer): ParsedSheet {
  const { text, notices } = decodeText(file);
  if (looksBinary(text))
    throw new UploadError("This is not a spreadsheet: the file holds binary data. Upload a CSV or .xlsx file.");
  let data: string[][];
  try {
    const result = Papa.parse<string[]>(text, { skipEmptyLines: false, delimitersToGuess: [",", ";", "\t", "|"] });
    data = result.data;
    const fatal = result.errors.find((e) => e.type === "Quotes");
    if (fatal)
      notices.push(
        `Row ${fatal.row != null ? fatal.row + 1 : "?"}: a quotation mark is not closed; the rest of the file may have been read as one cell.`,
      );
  } catch (e) {
    throw new UploadError(`The CSV file could not be read (${e instanceof Error ? e.message : "unknown problem"}).`);
  }
  const rows: StoredRow[] = data.map((cells, i) => ({
    n: i + 1,
    cells: cells.map((c): StoredCell => (/^=[A-Za-z(]/.test(c.trim()) ? { formula: true } : c)),
  }));
  return finishSheet("csv", rows, notices);
}

function finishSheet(kind: "csv" | "xlsx", all: StoredRow[], notices: string[]): ParsedSheet {
  const nonBlank = all.filter((r) => r.cells.some((c) => !isBlankStored(c)));
  const head = nonBlank[0];
  if (!head) throw new UploadError("The file has no rows. The first row must hold the column names.");
  const rows = nonBlank.slice(1);
  if (rows.length === 0) throw new UploadError("The file has a header row but no data rows.");
  if (rows.length > MAX_ROWS)
    throw new UploadError(`The file has ${rows.length} rows; at most ${MAX_ROWS} are read at once. Split it.`, 413);
  const seen = new Map<string, number>();
  const headers = head.cells.map((c, i) => {
    let h = typeof c === "string" ? c.trim() : typeof c === "number" || typeof c === "boolean" ? String(c) : "";
    if (h === "") h = `column ${columnLetter(i)}`;
    const k = seen.get(h) ?? 0;
    seen.set(h, k + 1);
    return k === 0 ? h : `${h} (${k + 1})`;
  });
  return { kind, headers, headerRow: head.n, rows, notices };
}

function isBlankStored(c: StoredCell): boolean {
  return typeof c === "string" ? c.trim() === "" : c == null;
}

export function columnLetter(i: number): string {
  let s = "";
  for (let n = i + 1; n > 0; n = Math.floor((n - 1) / 26)) s = String.fromCharCode(65 + ((n - 1) % 26)) + s;
  return s;
}

async function readXlsx(file: Buffer): Promise<ParsedSheet> {
  let data: unknown[][];
  let formulaCells: Set<string>;
  try {
    // First the limits on what the zip expands to (bombs, a million empty rows), then the reader.
    checkWorkbook(file);
  } catch (e) {
    if (e instanceof WorkbookTooLarge) throw new UploadError(e.message);
    const detail = e instanceof Error && e.message ? ` (${e.message})` : "";
    throw new UploadError(`This file could not be read as an Excel workbook${detail}. Save it again as .xlsx or CSV.`);
  }
  try {
    data = (await readSheet(file)) as unknown[][];
    formulaCells = findFormulaCells(file);
  } catch (e) {
    const detail = e instanceof Error && e.message ? ` (${e.message})` : "";
    throw new UploadError(`This file could not be read as an Excel workbook${detail}. Save it again as .xlsx or CSV.`);
  }
  const rows: StoredRow[] = data.map((cells, i) => ({
    n: i + 1,
    cells: cells.map((c, j): StoredCell => {
      if (formulaCells.has(`${columnLetter(j)}${i + 1}`)) return { formula: true };
      if (c instanceof Date) return { date: c.toISOString() };
      if (c == null || typeof c === "string" || typeof c === "number" || typeof c === "boolean") return c ?? null;
      return String(c);
    }),
  }));
  return finishSheet("xlsx", rows, []);
}

// A workbook is a zip; read-excel-file gives cached values only, so formula cells are found by
// reading the first worksheet's XML for <f> elements.
function unzipEntry(zip: Buffer, wanted: (name: string) => boolean): Map<string, Buffer> {
  const out = new Map<string, Buffer>();
  let eocd = -1;
  for (let i = zip.length - 22; i >= Math.max(0, zip.length - 65_557); i--) {
    if (zip.readUInt32LE(i) === 0x06054b50) {
      eocd = i;
      break;
    }
  }
  if (eocd < 0) throw new Error("not a zip archive");
  const count = zip.readUInt16LE(eocd + 10);
  let p = zip.readUInt32LE(eocd + 16);
  for (let k = 0; k < count; k++) {
    if (zip.readUInt32LE(p) !== 0x02014b50) throw new Error("damaged zip directory");
    const method = zip.readUInt16LE(p + 10);
    const compressed = zip.readUInt32LE(p + 20);
    const nameLen = zip.readUInt16LE(p + 28);
    const extraLen = zip.readUInt16LE(p + 30);
    const commentLen = zip.readUInt16LE(p + 32);
    const local = zip.readUInt32LE(p + 42);
    const name = zip.toString("utf8", p + 46, p + 46 + nameLen);
    if (wanted(name)) {
      const lNameLen = zip.readUInt16LE(local + 26);
      const lExtraLen = zip.readUInt16LE(local + 28);
      const start = local + 30 + lNameLen + lExtraLen;
      const raw = zip.subarray(start, start + compressed);
      out.set(name, method === 0 ? raw : zlib.inflateRawSync(raw));
    }
    p += 46 + nameLen + extraLen + commentLen;
  }
  return out;
}

function findFormulaCells(file: Buffer): Set<string> {
  const entries = unzipEntry(
    file,
    (n) => n === "xl/workbook.xml" || n === "xl/_rels/workbook.xml.rels" || n.startsWith("xl/worksheets/sheet"),
  );
  const workbook = entries.get("xl/workbook.xml")?.toString("utf8") ?? "";
  const rels = entries.get("xl/_rels/workbook.xml.rels")?.toString("utf8") ?? "";
  const firstSheetRel = /<sheet\b[^>]*\br:id="([^"]+)"/.exec(workbook)?.[1];
  let target = "xl/worksheets/sheet1.xml";
  if (firstSheetRel) {
    const rel = new RegExp(
      `<Relationship\\b[^>]*Id="${firstSheetRel}"[^>]*Target="([^"]+)"|<Relationship\\b[^>]*Target="([^"]+)"[^>]*Id="${firstSheetRel}"`,
    ).exec(rels);
    const t = rel?.[1] ?? rel?.[2];
    if (t) target = t.startsWith("/") ? t.slice(1) : `xl/${t}`;
  }
  const xml = entries.get(target)?.toString("utf8") ?? "";
  const found = new Set<string>();
  if (!xml.includes("<f")) return found;
  const cell = /<c\b[^>]*\br="([A-Z]+\d+)"[^>]*?(?:\/>|>([\s\S]*?)<\/c>)/g;
  for (let m = cell.exec(xml); m; m = cell.exec(xml)) {
    if (m[2] && /<f[\s>/]/.test(m[2])) found.add(m[1]!);
  }
  return found;
}

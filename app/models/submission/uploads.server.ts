// Spreadsheet uploads and the contributor API's bulk submissions: read a file, map its columns,
// validate every row, keep the result in upload_batches, and commit on the contributor's word,
// in one transaction with calibration. Nothing reaches sites/samples/determinations before that.

import crypto from "node:crypto";
import zlib from "node:zlib";
import Papa from "papaparse";
import { readSheet } from "read-excel-file/node";
import { and, desc, eq, inArray, sql } from "drizzle-orm";
import type { Db } from "#app/db/client.server.ts";
import {
  auditLog,
  calibrations,
  checkResults,
  determinations,
  labs,
  materials,
  modelRunScores,
  publications,
  releaseItems,
  reviews,
  samples,
  sites,
  uploadBatches,
  users,
  type UploadRowError,
} from "#app/db/schema.ts";
import { audit } from "#app/models/audit.server.ts";
import {
  calibrateDeterminations,
  calibrationInputFor,
  interpretMeasurement,
} from "#app/models/calibration/calibrations.server.ts";
import { runChecksFor } from "#app/models/review/check-run.server.ts";
import { activeCurve, listCurves, preparedCurve, type CurveRow } from "#app/models/calibration/curves.server.ts";
import { beyondCurve } from "#app/science/calibration.ts";
import {
  auditSnapshot,
  determinationValues,
  insertDetermination,
  measurementFields,
  sampleValues,
  siteValues,
} from "#app/models/submission/determinations.server.ts";
import { luminescenceAge } from "#app/science/luminescence.ts";
import {
  checkRow,
  COLUMNS,
  columnSpec,
  type DeterminationRow,
  isBlankCell,
  type RowContext,
  type RowIssue,
} from "#app/utils/determination-input.ts";
import { env } from "#app/utils/env.server.ts";

// ---------------------------------------------------------------- errors a whole file can have

/** A problem with the file itself (size, kind, unreadable); `status` is the HTTP answer. */
export class UploadError extends Error {
  constructor(
    message: string,
    public status = 400,
  ) {
    super(message);
  }
}

/** A commit refused as a whole (mode "all" with errors, nothing valid, already committed). */
export class CommitRefused extends Error {
  constructor(
    message: string,
    public status = 409,
  ) {
    super(message);
  }
}

// ---------------------------------------------------------------- reading files

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

export function formatBytes(n: number): string {
  if (n >= 1024 * 1024) return `${(n / 1024 / 1024).toFixed(1)} MB`;
  if (n >= 1024) return `${Math.round(n / 1024)} KB`;
  return `${n} bytes`;
}

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

// ---------------------------------------------------------------- column mapping

/** Header → column name ("" = not used). */
export type ColumnMapping = Record<string, string>;

/** Lower case, units in brackets and punctuation dropped, separators as single spaces. */
export function normaliseHeader(h: string): string {
  return h
    .toLowerCase()
    .replace(/\s*[([{][^)\]}]*[)\]}]\s*/g, " ")
    .replace(/[_\-./:]+/g, " ")
    .replace(/\s+/g, " ")
    .trim();
}

const BY_NORMALISED = new Map<string, string>();
for (const c of COLUMNS) {
  BY_NORMALISED.set(normaliseHeader(c.name), c.name);
  BY_NORMALISED.set(normaliseHeader(c.label), c.name);
  for (const s of c.synonyms ?? []) if (!BY_NORMALISED.has(normaliseHeader(s))) BY_NORMALISED.set(normaliseHeader(s), c.name);
}

/**
 * Guesses which column each header holds: first the lab's remembered mapping, then the exact
 * template name, then common spellings. Each column is taken by at most one header.
 */
export function guessMapping(headers: string[], remembered?: ColumnMapping | null): ColumnMapping {
  const mapping: ColumnMapping = {};
  const taken = new Set<string>();
  const assign = (h: string, col: string | undefined) => {
    if (!col || taken.has(col) || mapping[h]) return;
    mapping[h] = col;
    taken.add(col);
  };
  for (const h of headers) if (COLUMNS.some((c) => c.name === h)) assign(h, h);
  if (remembered) for (const h of headers) if (remembered[h] && columnSpec(remembered[h]!)) assign(h, remembered[h]);
  for (const h of headers) assign(h, BY_NORMALISED.get(normaliseHeader(h)));
  for (const h of headers) if (!(h in mapping)) mapping[h] = "";
  return mapping;
}

// ---------------------------------------------------------------- validation

export type RowResult = { n: number; value?: DeterminationRow; issues: RowIssue[]; warnings: RowIssue[] };

export type UploadPreview = {
  newSites: number;
  existingSites: number;
  newSamples: number;
  existingSamples: number;
  determinations: number;
  newLabs: string[];
  byMethod: Record<string, number>;
};

export type Validation = {
  results: RowResult[];
  errors: UploadRowError[];
  warnings: UploadRowError[];
  validCount: number;
  preview: UploadPreview;
  notices: string[];
};

type Registry = {
  ctx: RowContext;
  labs: { id: number; name: string; codePrefix: string }[];
  curveFor: (name: string) => CurveRow | undefined;
};

/** What validation needs from the registry, read once per file (no query per row). */
function loadRegistry(db: Db, labCodes: string[]): Registry {
  const mats = db.select().from(materials).all();
  const curveRows = listCurves(db).filter((c) => c.active);
  const curveNames = [...new Set(curveRows.map((c) => c.name))];
  const existing = new Map<string, number>();
  const lower = [...new Set(labCodes.map((c) => c.toLowerCase()))];
  for (let i = 0; i < lower.length; i += 500) {
    const chunk = lower.slice(i, i + 500);
    const rows = db
      .select({ id: determinations.id, labCode: determinations.labCode })
      .from(determinations)
      .where(inArray(sql`lower(${determinations.labCode})`, chunk))
      .all();
    for (const r of rows) existing.set(r.labCode.toLowerCase(), r.id);
  }
  const curveCache = new Map<string, CurveRow | undefined>();
  const curveFor = (name: string) => {
    if (!curveCache.has(name)) curveCache.set(name, activeCurve(db, name));
    return curveCache.get(name);
  };
  const ctx: RowContext = {
    materials: mats.map((m) => m.name),
    curves: curveNames,
    marineMaterials: mats.filter((m) => m.marine).map((m) => m.name),
    marineCurves: [...new Set(curveRows.filter((c) => c.kind === "marine").map((c) => c.name))],
    materialMethods: Object.fromEntries(mats.map((m) => [m.name.toLowerCase(), m.methods.split(",").map((s) => s.trim())])),
    labCodeInRegistry: (code) => existing.get(code.toLowerCase()) ?? null,
    calendarProblem: (row) => calendarProblem(db, row, curveFor),
  };
  const labRows = db.select({ id: labs.id, name: labs.name, codePrefix: labs.codePrefix }).from(labs).all();
  return { ctx, labs: labRows, curveFor };
}

/**
 * Can the registry give this row a calendar age? Limits and post-bomb ages are stored without
 * one (the checks report them); anything else that would fail at calibration — above all an age
 * beyond the curve — is a row error. Radiocarbon rows get the test `calibrate` itself applies
 * (beyondCurve, with the same input calibrate gets) and luminescence rows the age formula, without building a calendar
 * density (calendarOutcome would, and that dominated the time of a 5,500-row file).
 */
function calendarProblem(db: Db, row: DeterminationRow, curveFor: (n: string) => CurveRow | undefined): RowIssue | null {
  const fields = measurementFields(row);
  if (row.method === "radiocarbon") {
    const ageColumn = row.c14_age != null ? "c14_age" : "f14c";
    const interpreted = interpretMeasurement(fields);
    if (interpreted.kind === "invalid") return { column: ageColumn, message: interpreted.message };
    if (interpreted.kind !== "age") return null;
    const curve = curveFor(fields.curveName ?? "intcal20");
    if (!curve) return { column: "curve", message: `No active curve named "${fields.curveName}".` };
    const refusal = beyondCurve(preparedCurve(db, curve.id), calibrationInputFor(curve, fields, interpreted));
    if (refusal) return { column: ageColumn, message: refusal };
    return null;
  }
  if (fields.deGy == null || fields.doseRateGyPerKa == null) return null;
  try {
    luminescenceAge(
      { value: fields.deGy, error: fields.deErrorGy ?? 0 },
      { value: fields.doseRateGyPerKa, error: fields.doseRateErrorGyPerKa ?? 0 },
    );
  } catch (e) {
    return { column: "de_gy", message: e instanceof Error ? e.message : String(e) };
  }
  return null;
}

const SITE_MATCH_M = 100;

function distanceM(lat1: number, lon1: number, lat2: number, lon2: number): number {
  const rad = Math.PI / 180;
  const x = (lon2 - lon1) * rad * Math.cos(((lat1 + lat2) / 2) * rad);
  const y = (lat2 - lat1) * rad;
  return Math.hypot(x, y) * 6_371_000;
}

type SiteRef = { id: number; name: string; latitude: number; longitude: number };

function loadSitesByName(db: Db, names: string[]): Map<string, SiteRef[]> {
  const out = new Map<string, SiteRef[]>();
  const unique = [...new Set(names)];
  for (let i = 0; i < unique.length; i += 500) {
    const rows = db
      .select({ id: sites.id, name: sites.name, latitude: sites.latitude, longitude: sites.longitude })
      .from(sites)
      .where(inArray(sites.name, unique.slice(i, i + 500)))
      .all();
    for (const r of rows) out.set(r.name, [...(out.get(r.name) ?? []), r]);
  }
  return out;
}

/** The first of the same-named candidates within about 100 m of a row's coordinates: the same site (uploads and the form). */
export function findSite<T extends { latitude: number; longitude: number }>(
  candidates: T[] | undefined,
  lat: number,
  lon: number,
): T | undefined {
  return candidates?.find((s) => distanceM(s.latitude, s.longitude, lat, lon) <= SITE_MATCH_M);
}

/** The lab of a row: named, else by the lab code's prefix, else the uploader's own lab. */
function resolveLab(
  row: DeterminationRow,
  registry: Registry,
  userLabId: number | null,
): { labId: number } | { create: { name: string; codePrefix: string } } | { issue: RowIssue } {
  if (row.lab_name) {
    const lab = registry.labs.find((l) => l.name.toLowerCase() === row.lab_name!.toLowerCase());
    if (lab) return { labId: lab.id };
    return { create: { name: row.lab_name, codePrefix: codePrefixOf(row.lab_code) } };
  }
  const prefix = codePrefixOf(row.lab_code).toLowerCase();
  const byPrefix = registry.labs.find((l) => l.codePrefix.toLowerCase() === prefix);
  if (byPrefix) return { labId: byPrefix.id };
  if (userLabId != null) return { labId: userLabId };
  return {
    issue: {
      column: "lab_name",
      message: `Give lab_name: no laboratory in the registry uses the code prefix "${codePrefixOf(row.lab_code)}", and your account has no lab.`,
    },
  };
}

function codePrefixOf(labCode: string): string {
  return /^[A-Za-z]+/.exec(labCode)?.[0] ?? labCode.split(/[-\s]/)[0] ?? labCode;
}

function cellFor(c: StoredCell | undefined): unknown {
  if (c && typeof c === "object") {
    if ("date" in c) return new Date(c.date);
    return c;
  }
  return c;
}

/**
 * Validates every data row with the mapping: the row schema, then what needs the whole file or
 * the registry (duplicate lab codes, formula cells, labs). Row numbers are the spreadsheet's.
 */
export function validateRows(
  db: Db,
  sheet: { headers: string[]; rows: StoredRow[] },
  mapping: ColumnMapping,
  options: { userLabId?: number | null } = {},
): Validation {
  const index: [number, string][] = [];
  sheet.headers.forEach((h, i) => {
    const col = mapping[h];
    if (col && columnSpec(col)) index.push([i, col]);
  });
  const labCodeAt = index.find(([, c]) => c === "lab_code")?.[0];
  const labCodes =
    labCodeAt === undefined
      ? []
      : sheet.rows
          .map((r) => r.cells[labCodeAt])
          .filter((c): c is string | number => typeof c === "string" || typeof c === "number")
          .map((c) => String(c).trim());
  const registry = loadRegistry(db, labCodes);
  const notices: string[] = [];
  const mapped = new Set(index.map(([, c]) => c));
  for (const required of [
    "site_name",
    "latitude",
    "longitude",
    "sample_code",
    "material",
    "method",
    "lab_code",
    "constraint_kind",
  ]) {
    if (!mapped.has(required)) notices.push(`No column is mapped to ${required}; every row needs it.`);
  }
  const seenCodes = new Map<string, number>();
  const results: RowResult[] = [];
  for (const r of sheet.rows) {
    const raw: Record<string, unknown> = {};
    const formulaIssues: RowIssue[] = [];
    for (const [i, col] of index) {
      const cell = r.cells[i];
      if (cell && typeof cell === "object" && "formula" in cell) {
        formulaIssues.push({
          column: col,
          message: "Formula cells are not accepted; paste values instead (Paste Special → Values).",
        });
      } else raw[col] = cellFor(cell);
    }
    if (Object.values(raw).every(isBlankCell) && formulaIssues.length === 0) continue;
    const check = checkRow(raw, registry.ctx);
    const issues = [...formulaIssues, ...check.issues.filter((i) => !formulaIssues.some((f) => f.column === i.column))];
    const code = typeof raw.lab_code === "string" || typeof raw.lab_code === "number" ? String(raw.lab_code).trim() : "";
    if (code) {
      const first = seenCodes.get(code.toLowerCase());
      if (first !== undefined)
        issues.push({ column: "lab_code", message: `Lab code ${code} also appears in row ${first} of this file.` });
      else seenCodes.set(code.toLowerCase(), r.n);
    }
    let value: DeterminationRow | undefined;
    if (check.ok && issues.length === 0) {
      const lab = resolveLab(check.value, registry, options.userLabId ?? null);
      if ("issue" in lab) issues.push(lab.issue);
      else value = check.value;
    }
    results.push({ n: r.n, value, issues, warnings: check.warnings });
  }
  const errors = results.flatMap((r) => r.issues.map((i) => ({ row: r.n, column: i.column, message: i.message })));
  const warnings = results.flatMap((r) => r.warnings.map((i) => ({ row: r.n, column: i.column, message: i.message })));
  const valid = results.filter((r) => r.value);
  return {
    results,
    errors,
    warnings,
    validCount: valid.length,
    preview: previewOf(
      db,
      valid.map((r) => r.value!),
      registry,
      options.userLabId ?? null,
    ),
    notices,
  };
}

function previewOf(db: Db, rows: DeterminationRow[], registry: Registry, userLabId: number | null): UploadPreview {
  const existing = loadSitesByName(
    db,
    rows.map((r) => r.site_name),
  );
  const newSiteKeys: { name: string; lat: number; lon: number }[] = [];
  const newSitesByName = new Map<string, number[]>();
  const existingSiteIds = new Set<number>();
  const sampleKeys = new Set<string>();
  const byMethod: Record<string, number> = {};
  const newLabs = new Set<string>();
  const existingSampleSiteIds: number[] = [];
  for (const r of rows) {
    byMethod[r.method] = (byMethod[r.method] ?? 0) + 1;
    const lab = resolveLab(r, registry, userLabId);
    if ("create" in lab) newLabs.add(lab.create.name);
    const site = findSite(existing.get(r.site_name), r.latitude, r.longitude);
    if (site) {
      existingSiteIds.add(site.id);
      existingSampleSiteIds.push(site.id);
      sampleKeys.add(`s${site.id}|${r.sample_code}`);
    } else {
      const sameName = newSitesByName.get(r.site_name) ?? [];
      let k = sameName.find((i) => distanceM(newSiteKeys[i]!.lat, newSiteKeys[i]!.lon, r.latitude, r.longitude) <= SITE_MATCH_M);
      if (k === undefined) {
        k = newSiteKeys.push({ name: r.site_name, lat: r.latitude, lon: r.longitude }) - 1;
        newSitesByName.set(r.site_name, [...sameName, k]);
      }
      sampleKeys.add(`n${k}|${r.sample_code}`);
    }
  }
  let existingSamples = 0;
  const siteIds = [...new Set(existingSampleSiteIds)];
  if (siteIds.length) {
    const known = new Set(
      db
        .select({ siteId: samples.siteId, code: samples.fieldCode })
        .from(samples)
        .where(inArray(samples.siteId, siteIds))
        .all()
        .map((s) => `s${s.siteId}|${s.code}`),
    );
    for (const k of sampleKeys) if (known.has(k)) existingSamples++;
  }
  return {
    newSites: newSiteKeys.length,
    existingSites: existingSiteIds.size,
    newSamples: sampleKeys.size - existingSamples,
    existingSamples,
    determinations: rows.length,
    newLabs: [...newLabs],
    byMethod,
  };
}

// ---------------------------------------------------------------- batches

export type BatchRow = typeof uploadBatches.$inferSelect;

function userLab(db: Db, userId: number): number | null {
  return db.select({ labId: users.labId }).from(users).where(eq(users.id, userId)).get()?.labId ?? null;
}

function rememberedMapping(db: Db, labId: number | null): ColumnMapping | null {
  if (labId == null) return null;
  return db.select({ m: labs.lastMapping }).from(labs).where(eq(labs.id, labId)).get()?.m ?? null;
}

export function sheetOf(batch: BatchRow): { head: PayloadHead; headers: string[]; rows: StoredRow[] } {
  const payload = (batch.payload ?? []) as StoredRow[];
  const head = (payload[0] ?? { n: 1, cells: [], notices: [] }) as PayloadHead;
  return { head, headers: head.cells.map((c) => String(c ?? "")), rows: payload.slice(1) };
}

/**
 * Reads, maps and validates an upload and stores it as a batch with status "parsed".
 * Nothing is written to the registry. File-level problems throw UploadError.
 */
export async function createUpload(
  db: Db,
  input: { userId: number; fileName: string; file: Buffer },
): Promise<{ batch: BatchRow; validation: Validation }> {
  const sheet = await readUpload(input.file, input.fileName);
  const labId = userLab(db, input.userId);
  const mapping = guessMapping(sheet.headers, rememberedMapping(db, labId));
  const validation = validateRows(db, sheet, mapping, { userLabId: labId });
  const head: PayloadHead = {
    n: sheet.headerRow,
    cells: sheet.headers,
    notices: [...sheet.notices, ...validation.notices],
    warnings: validation.warnings,
    preview: validation.preview,
  };
  const batch = db
    .insert(uploadBatches)
    .values({
      publicId: crypto.randomBytes(12).toString("base64url"),
      userId: input.userId,
      labId,
      fileName: input.fileName.slice(0, 200) || "upload",
      fileKind: sheet.kind,
      fileSizeBytes: input.file.length,
      status: "parsed",
      mapping,
      rowCount: validation.results.length,
      validCount: validation.validCount,
      errors: validation.errors,
      payload: [head, ...sheet.rows],
    })
    .returning()
    .get();
  return { batch, validation };
}

/** Validates a parsed batch again with a new mapping, stores the result, and remembers the mapping for the lab. */
export function remapUpload(db: Db, batch: BatchRow, mapping: ColumnMapping): Validation {
  if (batch.status !== "parsed") throw new CommitRefused("This upload is already committed; its mapping cannot change.");
  const { head, headers, rows } = sheetOf(batch);
  const clean: ColumnMapping = {};
  const taken = new Set<string>();
  for (const h of headers) {
    const col = mapping[h] ?? "";
    if (col && columnSpec(col) && !taken.has(col)) {
      clean[h] = col;
      taken.add(col);
    } else clean[h] = "";
  }
  const labId = batch.labId ?? userLab(db, batch.userId);
  const validation = validateRows(db, { headers, rows }, clean, { userLabId: labId });
  const readerNotices = head.notices.filter((n) => !n.startsWith("No column is mapped"));
  const newHead: PayloadHead = {
    ...head,
    notices: [...readerNotices, ...validation.notices],
    warnings: validation.warnings,
    preview: validation.preview,
  };
  db.transaction((tx) => {
    tx.update(uploadBatches)
      .set({
        mapping: clean,
        errors: validation.errors,
        rowCount: validation.results.length,
        validCount: validation.validCount,
        payload: [newHead, ...rows],
      })
      .where(eq(uploadBatches.id, batch.id))
      .run();
    if (labId != null) tx.update(labs).set({ lastMapping: clean }).where(eq(labs.id, labId)).run();
  });
  return validation;
}

export function getBatchForUser(db: Db, publicId: string, userId: number): BatchRow | undefined {
  return db
    .select()
    .from(uploadBatches)
    .where(and(eq(uploadBatches.publicId, publicId), eq(uploadBatches.userId, userId)))
    .get();
}

export type BatchSummary = Omit<BatchRow, "payload" | "errors" | "mapping"> & {
  userName: string;
  errorCount: number;
  undoable: boolean;
};

/** A contributor's upload history, newest first, with whether each batch can still be undone. */
export function listBatches(db: Db, userId: number, limit = 100): BatchSummary[] {
  const rows = db
    .select({
      id: uploadBatches.id,
      publicId: uploadBatches.publicId,
      userId: uploadBatches.userId,
      labId: uploadBatches.labId,
      fileName: uploadBatches.fileName,
      fileKind: uploadBatches.fileKind,
      fileSizeBytes: uploadBatches.fileSizeBytes,
      status: uploadBatches.status,
      rowCount: uploadBatches.rowCount,
      validCount: uploadBatches.validCount,
      committedCount: uploadBatches.committedCount,
      createdAt: uploadBatches.createdAt,
      committedAt: uploadBatches.committedAt,
      undoneAt: uploadBatches.undoneAt,
      userName: users.name,
      errorCount: sql<number>`coalesce(json_array_length(${uploadBatches.errors}), 0)`,
    })
    .from(uploadBatches)
    .innerJoin(users, eq(users.id, uploadBatches.userId))
    .where(eq(uploadBatches.userId, userId))
    .orderBy(desc(uploadBatches.createdAt), desc(uploadBatches.id))
    .limit(limit)
    .all();
  const committed = rows.filter((r) => r.status === "committed").map((r) => r.id);
  const touched = new Set<number>();
  if (committed.length) {
    for (const r of db
      .selectDistinct({ batchId: determinations.uploadBatchId })
      .from(reviews)
      .innerJoin(determinations, eq(determinations.id, reviews.determinationId))
      .where(inArray(determinations.uploadBatchId, committed))
      .all()) {
      if (r.batchId != null) touched.add(r.batchId);
    }
  }
  return rows.map((r) => ({ ...r, undoable: r.status === "committed" && !touched.has(r.id) }));
}

// ---------------------------------------------------------------- commit

export type CommitMode = "all" | "valid_only";

export type CommitOptions = {
  /** Called after each determination is written; a test throws here to prove the rollback. */
  afterRow?: (i: number) => void;
  /** Filled with the milliseconds spent writing rows and calibrating, for the bench. */
  timings?: { insertMs?: number; calibrateMs?: number };
  ip?: string | null;
};

export type CommitResult = {
  committed: number;
  determinationIds: number[];
  createdSiteIds: number[];
  createdSampleIds: number[];
};

/**
 * Writes valid rows to the registry; the caller holds the transaction (better-sqlite3 runs the
 * nested transactions of insertDetermination as savepoints on the same connection): labs, publications, sites and samples
 * as needed, each determination with its audit row, then their calibrations. Anything that
 * throws rolls the whole commit back.
 */
function writeRows(
  db: Db,
  rows: DeterminationRow[],
  ctx: { userId: number; batchId: number; userLabId: number | null },
  options: CommitOptions,
): CommitResult {
  const t0 = performance.now();
  const labRows = db.select({ id: labs.id, name: labs.name, codePrefix: labs.codePrefix }).from(labs).all();
  const registry = { labs: labRows } as Registry;
  const existingSites = loadSitesByName(
    db,
    rows.map((r) => r.site_name),
  );
  const createdSites = new Map<string, SiteRef[]>();
  const sampleCache = new Map<string, number>();
  const pubCache = new Map<string, number>();
  const createdSiteIds: number[] = [];
  const createdSampleIds: number[] = [];
  const ids: number[] = [];

  const sampleLookup = db.$client.prepare("select id from samples where site_id = ? and field_code = ?").pluck();
  const pubLookup = db.$client.prepare("select id from publications where lower(doi) = lower(?)").pluck();

  rows.forEach((row, i) => {
    // Lab
    let labId: number;
    const lab = resolveLab(row, registry, ctx.userLabId);
    if ("issue" in lab) throw new CommitRefused(lab.issue.message, 400);
    if ("labId" in lab) labId = lab.labId;
    else {
      let prefix = lab.create.codePrefix || "LAB";
      const used = new Set(registry.labs.map((l) => l.codePrefix.toLowerCase()));
      for (let k = 2; used.has(prefix.toLowerCase()); k++) prefix = `${lab.create.codePrefix}${k}`;
      const created = db.insert(labs).values({ name: lab.create.name, codePrefix: prefix }).returning().get();
      registry.labs.push({ id: created.id, name: created.name, codePrefix: created.codePrefix });
      audit(db, {
        actorId: ctx.userId,
        action: "lab.create",
        entity: "lab",
        entityId: created.id,
        after: { name: created.name, codePrefix: prefix },
        ip: options.ip,
      });
      labId = created.id;
    }
    // Site: same name and within ~100 m
    let site =
      findSite(existingSites.get(row.site_name), row.latitude, row.longitude) ??
      findSite(createdSites.get(row.site_name), row.latitude, row.longitude);
    if (!site) {
      const created = db.insert(sites).values(siteValues(row, ctx.userId)).returning({ id: sites.id }).get();
      site = { id: created.id, name: row.site_name, latitude: row.latitude, longitude: row.longitude };
      createdSites.set(site.name, [...(createdSites.get(site.name) ?? []), site]);
      createdSiteIds.push(created.id);
    }
    // Sample: same site and field code
    const sKey = `${site.id}|${row.sample_code}`;
    let sampleId = sampleCache.get(sKey) ?? (sampleLookup.get(site.id, row.sample_code) as number | undefined);
    if (sampleId === undefined) {
      sampleId = db
        .insert(samples)
        .values({ siteId: site.id, ...sampleValues(row) })
        .returning({ id: samples.id })
        .get().id;
      createdSampleIds.push(sampleId);
    }
    sampleCache.set(sKey, sampleId);
    // Publication by DOI
    let publicationId: number | null = null;
    if (row.doi) {
      const key = row.doi.toLowerCase();
      publicationId = pubCache.get(key) ?? (pubLookup.get(row.doi) as number | undefined) ?? null;
      if (publicationId == null) {
        publicationId = db
          .insert(publications)
          .values({ citation: `DOI ${row.doi}`, doi: row.doi })
          .returning({ id: publications.id })
          .get().id;
      }
      pubCache.set(key, publicationId);
    }
    const det = insertDetermination(
      db,
      {
        sampleId,
        labId,
        ...determinationValues(row),
        status: "submitted",
        contributorId: ctx.userId,
        publicationId,
        uploadBatchId: ctx.batchId,
      },
      ctx.userId,
    );
    ids.push(det.id);
    options.afterRow?.(i);
  });
  const t1 = performance.now();
  calibrateDeterminations(db, ids);
  runChecksFor(db, ids);
  const t2 = performance.now();
  if (options.timings) {
    options.timings.insertMs = t1 - t0;
    options.timings.calibrateMs = t2 - t1;
  }
  return { committed: ids.length, determinationIds: ids, createdSiteIds, createdSampleIds };
}

/**
 * Commits a parsed batch. The rows are validated again first (the registry may have changed
 * since the upload): mode "all" with any error is refused (409) and writes nothing.
 */
export function commitUpload(
  db: Db,
  batch: BatchRow,
  mode: CommitMode,
  actor: { userId: number },
  options: CommitOptions = {},
): CommitResult {
  if (batch.userId !== actor.userId) throw new CommitRefused("Not found.", 404);
  if (batch.status !== "parsed") throw new CommitRefused(`This upload is ${batch.status}; it cannot be committed again.`);
  const { headers, rows } = sheetOf(batch);
  const labId = batch.labId ?? userLab(db, batch.userId);
  const validation = validateRows(db, { headers, rows }, batch.mapping ?? {}, { userLabId: labId });
  if (mode === "all" && validation.errors.length > 0) {
    throw new CommitRefused(
      `The file has ${validation.errors.length} error${validation.errors.length === 1 ? "" : "s"} in ${validation.results.length - validation.validCount} row(s); fix them or commit the valid rows only.`,
    );
  }
  const valid = validation.results.filter((r) => r.value).map((r) => r.value!);
  if (valid.length === 0) throw new CommitRefused("No row is valid; nothing to commit.", 400);
  return db.transaction((tx) => {
    const result = writeRows(db, valid, { userId: actor.userId, batchId: batch.id, userLabId: labId }, options);
    tx.update(uploadBatches)
      .set({
        status: "committed",
        committedAt: new Date(),
        committedCount: result.committed,
        errors: validation.errors,
        validCount: validation.validCount,
      })
      .where(eq(uploadBatches.id, batch.id))
      .run();
    if (labId != null && batch.mapping) tx.update(labs).set({ lastMapping: batch.mapping }).where(eq(labs.id, labId)).run();
    audit(tx, {
      actorId: actor.userId,
      action: "upload.commit",
      entity: "upload_batch",
      entityId: batch.publicId,
      after: {
        mode,
        committed: result.committed,
        skippedRows: validation.results.length - validation.validCount,
        createdSiteIds: result.createdSiteIds,
        createdSampleIds: result.createdSampleIds,
      },
      ip: options.ip,
    });
    return result;
  });
}

/** Rows sent as JSON to the API: all valid → committed as one batch of kind json; else errors and nothing written. */
export function submitJsonRows(
  db: Db,
  items: unknown[],
  actor: { userId: number },
  options: CommitOptions = {},
): { ok: true; determinationIds: number[] } | { ok: false; errors: (UploadRowError & { index: number })[] } {
  const headers = COLUMNS.map((c) => c.name);
  const errors: (UploadRowError & { index: number })[] = [];
  const rows: StoredRow[] = items.map((item, i) => {
    if (!item || typeof item !== "object" || Array.isArray(item)) {
      errors.push({ index: i, row: i + 1, column: "", message: "Each item must be an object whose keys are column names." });
      return { n: i + 1, cells: [] };
    }
    const obj = item as Record<string, unknown>;
    for (const key of Object.keys(obj)) {
      if (!columnSpec(key)) errors.push({ index: i, row: i + 1, column: key, message: `Unknown field "${key}".` });
    }
    return {
      n: i + 1,
      cells: headers.map((h): StoredCell => {
        const v = obj[h];
        if (v == null) return null;
        if (typeof v === "string" || typeof v === "number" || typeof v === "boolean") return v;
        return JSON.stringify(v);
      }),
    };
  });
  const labId = userLab(db, actor.userId);
  const mapping = Object.fromEntries(headers.map((h) => [h, h]));
  // Index rows from 1 so a blank object still gets its row number back.
  const validation = validateRows(db, { headers, rows }, mapping, { userLabId: labId });
  for (const r of rows) {
    if (r.cells.length > 0 && !validation.results.some((v) => v.n === r.n)) {
      errors.push({ index: r.n - 1, row: r.n, column: "", message: "The item is empty." });
    }
  }
  for (const e of validation.errors) errors.push({ index: e.row - 1, ...e });
  if (errors.length > 0) {
    errors.sort((a, b) => a.index - b.index);
    return { ok: false, errors };
  }
  const valid = validation.results.map((r) => r.value!);
  return db.transaction((tx) => {
    const batch = tx
      .insert(uploadBatches)
      .values({
        publicId: crypto.randomBytes(12).toString("base64url"),
        userId: actor.userId,
        labId,
        fileName: "API submission",
        fileKind: "json",
        fileSizeBytes: 0,
        status: "committed",
        mapping,
        rowCount: valid.length,
        validCount: valid.length,
        committedCount: valid.length,
        errors: [],
        payload: [],
        committedAt: new Date(),
      })
      .returning()
      .get();
    const result = writeRows(db, valid, { userId: actor.userId, batchId: batch.id, userLabId: labId }, options);
    audit(tx, {
      actorId: actor.userId,
      action: "upload.commit",
      entity: "upload_batch",
      entityId: batch.publicId,
      after: {
        mode: "api",
        committed: result.committed,
        createdSiteIds: result.createdSiteIds,
        createdSampleIds: result.createdSampleIds,
      },
      ip: options.ip,
    });
    return { ok: true as const, determinationIds: result.determinationIds };
  });
}

// ---------------------------------------------------------------- undo

/**
 * Takes a committed batch back out of the registry, provided no reviewer has touched any of its
 * determinations and none is in a release or a model-run score: its determinations (with their
 * calibrations and checks) and the sites and samples created only for it. Audited, one transaction.
 */
export function undoUpload(db: Db, batch: BatchRow, actor: { userId: number; ip?: string | null }): { removed: number } {
  if (batch.userId !== actor.userId) throw new CommitRefused("Not found.", 404);
  if (batch.status !== "committed")
    throw new CommitRefused(`This upload is ${batch.status}; only a committed upload can be undone.`);
  return db.transaction((tx) => {
    const dets = tx.select().from(determinations).where(eq(determinations.uploadBatchId, batch.id)).all();
    const ids = dets.map((d) => d.id);
    const blocked = (table: typeof reviews | typeof releaseItems | typeof modelRunScores, what: string) => {
      for (let i = 0; i < ids.length; i += 500) {
        const hit = tx
          .select({ id: table.determinationId })
          .from(table)
          .where(inArray(table.determinationId, ids.slice(i, i + 500)))
          .limit(1)
          .get();
        if (hit) throw new CommitRefused(`This upload cannot be undone: ${what}.`);
      }
    };
    blocked(reviews, "a reviewer has already graded some of its determinations");
    blocked(releaseItems, "some of its determinations are in a published release");
    blocked(modelRunScores, "some of its determinations have model-run scores");
    if (dets.some((d) => d.status !== "submitted")) {
      throw new CommitRefused("This upload cannot be undone: some of its determinations are already in review or withdrawn.");
    }
    const commitEntry = tx
      .select({ after: auditLog.after })
      .from(auditLog)
      .where(and(eq(auditLog.action, "upload.commit"), eq(auditLog.entityId, batch.publicId)))
      .orderBy(desc(auditLog.id))
      .get();
    const createdSampleIds = ((commitEntry?.after?.createdSampleIds as number[] | undefined) ?? []).slice();
    const createdSiteIds = ((commitEntry?.after?.createdSiteIds as number[] | undefined) ?? []).slice();
    for (let i = 0; i < ids.length; i += 500) {
      const chunk = ids.slice(i, i + 500);
      tx.delete(calibrations).where(inArray(calibrations.determinationId, chunk)).run();
      tx.delete(checkResults).where(inArray(checkResults.determinationId, chunk)).run();
    }
    for (const d of dets) {
      tx.delete(determinations).where(eq(determinations.id, d.id)).run();
      audit(tx, {
        actorId: actor.userId,
        action: "determination.delete",
        entity: "determination",
        entityId: d.id,
        before: auditSnapshot(d),
        after: null,
        ip: actor.ip,
      });
    }
    // Samples and sites the batch created, unless something else has come to use them since.
    const sampleStillUsed = db.$client.prepare("select 1 from determinations where sample_id = ? limit 1").pluck();
    const removedSamples: number[] = [];
    for (const id of createdSampleIds) {
      if (!sampleStillUsed.get(id)) {
        tx.delete(samples).where(eq(samples.id, id)).run();
        removedSamples.push(id);
      }
    }
    const siteStillUsed = db.$client.prepare("select 1 from samples where site_id = ? limit 1").pluck();
    const removedSites: number[] = [];
    for (const id of createdSiteIds) {
      if (!siteStillUsed.get(id)) {
        tx.delete(sites).where(eq(sites.id, id)).run();
        removedSites.push(id);
      }
    }
    tx.update(uploadBatches).set({ status: "undone", undoneAt: new Date() }).where(eq(uploadBatches.id, batch.id)).run();
    audit(tx, {
      actorId: actor.userId,
      action: "upload.undo",
      entity: "upload_batch",
      entityId: batch.publicId,
      before: { committed: ids.length },
      after: { removedDeterminations: ids.length, removedSampleIds: removedSamples, removedSiteIds: removedSites },
      ip: actor.ip,
    });
    return { removed: ids.length };
  });
}

// ---------------------------------------------------------------- bench

export type UploadBench = {
  rows: number;
  parseMs: number;
  validateMs: number;
  insertMs: number;
  calibrateMs: number;
  totalMs: number;
};

/**
 * Times one file through the whole path — read, validate (with the mapping guessed), write and
 * calibrate — as the upload page and the API run it. Writes to `db` as `userId`.
 */
export async function benchUpload(db: Db, file: Buffer, kind: "csv" | "xlsx", userId: number): Promise<UploadBench> {
  const t0 = performance.now();
  const sheet = await readUpload(file, `bench.${kind}`);
  const t1 = performance.now();
  const mapping = guessMapping(sheet.headers);
  const labId = userLab(db, userId);
  const validation = validateRows(db, sheet, mapping, { userLabId: labId });
  const t2 = performance.now();
  const batch = db
    .insert(uploadBatches)
    .values({
      publicId: crypto.randomBytes(12).toString("base64url"),
      userId,
      labId,
      fileName: `bench.${kind}`,
      fileKind: kind,
      fileSizeBytes: file.length,
      mapping,
      rowCount: validation.results.length,
      validCount: validation.validCount,
      errors: validation.errors,
      payload: [{ n: sheet.headerRow, cells: sheet.headers, notices: [] }, ...sheet.rows],
    })
    .returning()
    .get();
  const timings: { insertMs?: number; calibrateMs?: number } = {};
  const t3 = performance.now();
  commitUpload(db, batch, "valid_only", { userId }, { timings });
  const t4 = performance.now();
  // commitUpload validates again before writing; count that with validation, not with the writes.
  const revalidateMs = t4 - t3 - (timings.insertMs ?? 0) - (timings.calibrateMs ?? 0);
  return {
    rows: validation.results.length,
    parseMs: t1 - t0,
    validateMs: t2 - t1 + revalidateMs,
    insertMs: timings.insertMs ?? 0,
    calibrateMs: timings.calibrateMs ?? 0,
    totalMs: t4 - t0,
  };
}

// A sheet of radiocarbon ages for the calibration page, in the upload template's own columns:
// pasted from a spreadsheet or read from a CSV/XLSX file. Every row becomes an item for the
// calibration model, or the problems of each of its cells, all at once. Client-safe (the page reads
// a paste in the browser; the server reads the same way for the page without script).

import Papa from "papaparse";
import { groupThousands } from "#app/science/calendar.ts";
import { interpretRadiocarbon } from "#app/science/radiocarbon.ts";
import { MAX_SIGMA_YR } from "#app/utils/calibrate-limits.ts";
import { formatWithError } from "#app/utils/age-format.ts";
import type { CalibrationItem } from "#app/utils/calibrate-input.ts";
import {
  isBlankCell,
  readChoice,
  readIdentifier,
  readNumber,
  readText,
  readYesNo,
} from "#app/utils/determination-input/cells.ts";
import { COLUMNS, columnSpec, type ColumnSpec } from "#app/utils/determination-input/columns.ts";
import { inFormWords } from "#app/utils/determination-input/form-words.ts";
import { columnForHeader } from "#app/utils/determination-input/headers.ts";

/** Most rows the page calibrates at once (script); a longer sheet is refused, not cut. */
export const MAX_SHEET_ROWS = 5_000;

/** A cell as the readers give it: text from a paste or CSV; numbers, dates and formulas from a workbook. */
export type SheetCell = string | number | boolean | null | { date: string } | { formula: true };

/** The template columns this page reads; all others are set aside. */
export const SHEET_COLUMNS = [
  "lab_code",
  "c14_age",
  "c14_error",
  "f14c",
  "f14c_error",
  "d13c",
  "age_normalised",
  "normalised_to_zero_permil",
  "greater_than",
  "curve",
  "delta_r",
  "delta_r_error",
  "delta_r_curve",
  "freshwater_offset",
  "freshwater_offset_error",
  "method",
] as const;
type SheetColumn = (typeof SHEET_COLUMNS)[number];

/** Read without a header row: these columns in this order (the first cell says whether a lab code leads). */
const WITH_CODE: SheetColumn[] = ["lab_code", "c14_age", "c14_error", "curve", "delta_r", "delta_r_error"];
const WITHOUT_CODE: SheetColumn[] = ["c14_age", "c14_error", "curve", "delta_r", "delta_r_error"];

export type CellProblem = { column: string; message: string };
export type SheetRow = {
  /** The row's number in the sheet (1 = the first line, the header when there is one). */
  row: number;
  /** The lab code, or "row N" when the sheet has none. */
  label: string;
  item?: CalibrationItem;
  problems: CellProblem[];
  /** What was done to the measurement before calibration (δ¹³C normalisation, F¹⁴C to age). */
  note?: string;
};
export type ReadSheet = {
  rows: SheetRow[];
  /** Header row number, or null when the columns were read by position. */
  headerRow: number | null;
  /** Which column each used header was read as, in the sheet's order. */
  used: { header: string; column: string }[];
  /** Template columns this page does not need, and headers it does not know. */
  setAside: string[];
  unknown: string[];
  /** Problems with the sheet as a whole (no age column, too many rows). */
  problems: string[];
};

/** A row of a sheet with its number in the sheet (1 = the first line). */
export type NumberedRow = { n: number; cells: SheetCell[] };
export type SheetDefaults = { curve: string; deltaR?: number; deltaRError?: number };
export type CurveChoice = { name: string; kind: "atmospheric" | "marine" };

const spec = (name: SheetColumn) => columnSpec(name) as ColumnSpec;

/** How a workbook's formula cell is written into the sheet's text (the reader has no value for it). */
const FORMULA_TEXT = "(formula)";

/** A read file's rows as the sheet's text (tab-separated, as a spreadsheet copies), for the paste box. */
export function sheetText(rows: NumberedRow[]): string {
  const text = (c: SheetCell): string => {
    if (c == null) return "";
    if (typeof c === "object") return "date" in c ? c.date.slice(0, 10) : FORMULA_TEXT;
    return String(c);
  };
  return Papa.unparse(
    rows.map((r) => r.cells.map(text)),
    { delimiter: "\t", newline: "\n" },
  );
}

/** Splits pasted text (tabs from a spreadsheet, or commas/semicolons) into rows of cells, at most `maxRows` + 1. */
export function splitPastedSheet(text: string, maxRows = MAX_SHEET_ROWS): { rows: NumberedRow[]; more: boolean } {
  if (text.trim() === "") return { rows: [], more: false };
  // A header plus maxRows data rows, and one more to know the sheet is longer.
  const limit = maxRows + 2;
  const result = Papa.parse<string[]>(text, {
    delimitersToGuess: ["\t", ",", ";", "|"],
    skipEmptyLines: false,
    preview: limit,
  });
  const cells = result.data.map((row) => row.map((c) => c.trim()));
  // The final line break of a paste leaves one empty row; it is not a row of the sheet.
  while (cells.length && cells[cells.length - 1]!.every((c) => c === "")) cells.pop();
  return { rows: cells.map((c, i) => ({ n: i + 1, cells: c })), more: result.data.length >= limit };
}

function cellText(c: SheetCell): string {
  if (c == null) return "";
  if (typeof c === "object") return "date" in c ? c.date : "";
  return String(c).trim();
}

function asReaderValue(c: SheetCell): unknown {
  // The cell readers know Date objects; a stored date arrives as { date: ISO text }.
  if (c && typeof c === "object" && "date" in c) return new Date(c.date);
  return c;
}

function looksNumeric(c: SheetCell): boolean {
  if (typeof c === "number") return true;
  return typeof c === "string" && /^[-+−]?(\d+\.?\d*|\.\d+)$/.test(c.trim());
}

/** Which column each cell of the header row names; null when the first row is data, not a header. */
function headerColumns(first: SheetCell[]): (string | null)[] | null {
  if (first.some(looksNumeric)) return null;
  const named = first.map((c) => (typeof c === "string" ? (columnForHeader(c) ?? null) : null));
  return named.some((n) => n !== null) ? named : null;
}

/**
 * Reads a sheet (the numbered rows of a paste or file, first row first) into items to calibrate.
 * Blank rows are skipped; `curves` are the curves one may name; `more` says the sheet went on past
 * what was read. Problems are reported at the row and column they concern, every one of them.
 */
export function readCalibrationSheet(
  rows: NumberedRow[],
  options: { defaults: SheetDefaults; curves: CurveChoice[]; more?: boolean },
): ReadSheet {
  const numbered = rows.filter((r) => r.cells.some((c) => !isBlankCell(c)));
  const out: ReadSheet = { rows: [], headerRow: null, used: [], setAside: [], unknown: [], problems: [] };
  if (numbered.length === 0) return out;

  let columns: (string | null)[];
  let body = numbered;
  const header = headerColumns(numbered[0]!.cells);
  if (header) {
    out.headerRow = numbered[0]!.n;
    body = numbered.slice(1);
    const taken = new Set<string>();
    columns = header.map((col, i) => {
      const text = cellText(numbered[0]!.cells[i] ?? null);
      if (col && (SHEET_COLUMNS as readonly string[]).includes(col) && !taken.has(col)) {
        taken.add(col);
        out.used.push({ header: text, column: col });
        return col;
      }
      if (text !== "") (col ? out.setAside : out.unknown).push(text);
      return null;
    });
    if (!taken.has("c14_age") && !taken.has("f14c")) {
      out.problems.push(
        "The header row names no c14_age (or f14c) column. Use the upload template's column names, e.g. lab_code, c14_age, c14_error, curve.",
      );
      return out;
    }
  } else {
    columns = looksNumeric(numbered[0]!.cells[0] ?? null) ? WITHOUT_CODE : WITH_CODE;
    out.used = columns.map((c) => ({ header: "", column: c! }));
  }
  if (body.length > MAX_SHEET_ROWS || (options.more && body.length >= MAX_SHEET_ROWS)) {
    out.problems.push(
      `The sheet has more than ${MAX_SHEET_ROWS.toLocaleString("en")} rows; calibrate at most ${MAX_SHEET_ROWS.toLocaleString("en")} at a time (split it).`,
    );
    return out;
  }
  const curveNames = options.curves.map((c) => c.name);
  const kindOf = new Map(options.curves.map((c) => [c.name, c.kind]));
  for (const r of body) {
    const raw: Partial<Record<SheetColumn, SheetCell>> = {};
    const extra: SheetCell[] = [];
    r.cells.forEach((c, i) => {
      const col = columns[i];
      if (col) raw[col as SheetColumn] = c;
      else if (!header && !isBlankCell(c)) extra.push(c);
    });
    const row = readRow(r.n, raw, { ...options.defaults, curveNames, kindOf });
    if (extra.length) {
      row.problems.push({
        column: "",
        message: `${r.cells.length} cells; without a header row at most ${columns.length} are read (${columns.join(", ")}). Add the template's header row to use other columns.`,
      });
      delete row.item;
    }
    out.rows.push(row);
  }
  return out;
}

type RowContext = SheetDefaults & { curveNames: string[]; kindOf: Map<string, CurveChoice["kind"]> };

function readRow(n: number, raw: Partial<Record<SheetColumn, SheetCell>>, ctx: RowContext): SheetRow {
  const problems: CellProblem[] = [];
  const read = <T>(col: SheetColumn, reader: (v: unknown, s: ColumnSpec) => { value?: T; issue?: string }): T | undefined => {
    const v = raw[col];
    if ((v && typeof v === "object" && "formula" in v) || v === FORMULA_TEXT) {
      problems.push({ column: col, message: "This cell holds a formula; paste or save values only." });
      return undefined;
    }
    const r = reader(asReaderValue(v ?? null), spec(col));
    if (r.issue) problems.push({ column: col, message: r.issue });
    return r.value;
  };
  const labCode = read("lab_code", readIdentifier);
  const label = labCode ?? `row ${n}`;
  const method = read("method", (v, s) => readChoice(v, s, ["radiocarbon", "luminescence"] as const));
  if (method === "luminescence") {
    return {
      row: n,
      label,
      problems: [{ column: "method", message: "A luminescence age needs no curve; this page calibrates radiocarbon ages only." }],
    };
  }
  const age = read("c14_age", readNumber);
  const error = read("c14_error", readNumber);
  const f14c = read("f14c", readNumber);
  const f14cError = read("f14c_error", readNumber);
  const d13c = read("d13c", readNumber);
  const normalised = read("age_normalised", readYesNo);
  const zeroPermil = read("normalised_to_zero_permil", readYesNo);
  const greaterThan = read("greater_than", readYesNo);
  const curveText = read("curve", (v, s) => readChoice(v, s, ctx.curveNames));
  const deltaR = read("delta_r", readNumber);
  const deltaRError = read("delta_r_error", readNumber);
  const deltaRCurve = read("delta_r_curve", (v, s) => readText(v, s, 40));
  const freshwater = read("freshwater_offset", readNumber);
  const freshwaterError = read("freshwater_offset_error", readNumber);

  const hasAge = !isBlankCell(raw.c14_age);
  const hasF = !isBlankCell(raw.f14c);
  if (!hasAge && !hasF) {
    problems.push({ column: "c14_age", message: "No age: give c14_age and c14_error (or f14c and f14c_error)." });
  } else if (hasAge && hasF) {
    problems.push({ column: "f14c", message: "Give the age either as c14_age or as f14c, not both." });
  } else if (hasAge && isBlankCell(raw.c14_error)) {
    problems.push({ column: "c14_error", message: "c14_error is missing: give the 1σ of the age in ¹⁴C yr." });
  } else if (hasF && isBlankCell(raw.f14c_error)) {
    problems.push({ column: "f14c_error", message: "f14c_error is missing: give the 1σ of F¹⁴C." });
  }
  if (error !== undefined && !(error > 0)) problems.push({ column: "c14_error", message: "c14_error must be more than 0." });
  if (f14cError !== undefined && !(f14cError > 0))
    problems.push({ column: "f14c_error", message: "f14c_error must be more than 0." });
  if (deltaRError !== undefined && deltaRError < 0)
    problems.push({ column: "delta_r_error", message: "delta_r_error must be 0 or more." });
  if (freshwaterError !== undefined && freshwaterError < 0)
    problems.push({ column: "freshwater_offset_error", message: "freshwater_offset_error must be 0 or more." });
  if (freshwaterError !== undefined && freshwater === undefined)
    problems.push({
      column: "freshwater_offset",
      message: "freshwater_offset is missing: give the offset its error belongs to.",
    });
  for (const [column, sigma] of [
    ["c14_error", error],
    ["delta_r_error", deltaRError],
    ["freshwater_offset_error", freshwaterError],
  ] as const) {
    if (sigma !== undefined && sigma > MAX_SIGMA_YR) problems.push({ column, message: tooUncertain(column, sigma) });
  }

  const curve = (curveText ?? ctx.curve).toLowerCase();
  const marine = ctx.kindOf.get(curve) === "marine";
  if (!marine && ((deltaR ?? 0) !== 0 || (deltaRError ?? 0) !== 0)) {
    problems.push({
      column: "delta_r",
      message: `ΔR applies to marine curves only; this row is calibrated on ${curve}. Give curve marine20 or leave ΔR empty.`,
    });
  }
  if (marine && (freshwater ?? 0) !== 0) {
    problems.push({
      column: "freshwater_offset",
      message: `A freshwater offset applies to atmospheric curves only; this row is calibrated on ${curve}. Give its marine offset as delta_r.`,
    });
  }
  if (problems.length) return { row: n, label, problems };

  const interpreted = interpretRadiocarbon({
    measurement: hasAge ? { age: age!, error: error! } : { f14c: f14c!, error: f14cError! },
    d13c: d13c ?? null,
    alreadyNormalised: normalised ?? true,
    normalisedToZeroPermil: zeroPermil ?? false,
    reportedAsLimit: greaterThan ?? false,
  });
  if (interpreted.kind !== "age") {
    const column =
      interpreted.kind === "invalid"
        ? { f14c: "f14c", age: "c14_age", error: hasAge ? "c14_error" : "f14c_error", d13c: "d13c" }[interpreted.field]
        : interpreted.kind === "limit"
          ? "greater_than"
          : "f14c";
    return { row: n, label, problems: [{ column, message: interpreted.message }] };
  }
  if (interpreted.error > MAX_SIGMA_YR) {
    return { row: n, label, problems: [{ column: "f14c_error", message: tooUncertain("the age's error", interpreted.error) }] };
  }
  // A freshwater (hard-water) offset on an atmospheric curve is applied like ΔR: added to the curve with
  // the errors in quadrature (science/reservoir.ts), which is the same as taking it off the age.
  const offset = !marine && freshwater !== undefined && freshwater !== 0 ? { yr: freshwater, error: freshwaterError ?? 0 } : null;
  const item: CalibrationItem = offset
    ? {
        id: label,
        c14_age: interpreted.age - offset.yr,
        c14_error: Math.hypot(interpreted.error, offset.error),
        curve,
      }
    : { id: label, c14_age: interpreted.age, c14_error: interpreted.error, curve };
  // The row's own ΔR, else the page's ΔR for rows on the page's curve.
  const ownCurve = curveText === undefined || curve === ctx.curve.toLowerCase();
  const rowDeltaR = deltaR ?? (ownCurve ? ctx.deltaR : undefined);
  const rowDeltaRError = deltaR !== undefined ? deltaRError : ownCurve ? ctx.deltaRError : undefined;
  if (marine && rowDeltaR !== undefined) item.delta_r = rowDeltaR;
  if (marine && rowDeltaRError !== undefined) item.delta_r_error = rowDeltaRError;
  const notes = [
    !hasAge
      ? `From F¹⁴C ${formatWithError(f14c!, f14cError)}.`
      : interpreted.normalisedHere
        ? `Normalised to δ¹³C −25 ‰ (${interpreted.correctionYears >= 0 ? "+" : "−"}${Math.abs(Math.round(interpreted.correctionYears))} ¹⁴C yr).`
        : null,
    offset
      ? `Freshwater offset ${formatWithError(offset.yr, offset.error, "¹⁴C yr")} taken off: calibrated as ${formatWithError(item.c14_age, item.c14_error, "¹⁴C yr BP")}.`
      : null,
    marine && item.delta_r !== undefined && deltaRCurve && deltaRCurve.trim().toLowerCase() !== curve
      ? `ΔR was derived against ${deltaRCurve.trim()}, not ${curve}: ΔR values do not carry over between curves, so this result uses it as given.`
      : null,
  ].filter((x): x is string => x !== null);
  const note = notes.length ? notes.join(" ") : undefined;
  return { row: n, label, item, problems: [], ...(note ? { note } : {}) };
}

/** The calibration API's bound on a 1σ (utils/calibrate-limits.ts), in the page's words. */
function tooUncertain(what: string, sigma: number): string {
  return `${what} ${groupThousands(Math.round(sigma))} is more than the ${groupThousands(MAX_SIGMA_YR)} ¹⁴C yr taken here; an age this uncertain spans the whole curve.`;
}

/** The sheet's columns in the template's words, for the page's help text. */
export function sheetColumnHelp(): { name: string; help: string }[] {
  return SHEET_COLUMNS.map((name) => {
    const c = COLUMNS.find((x) => x.name === name)!;
    return { name, help: c.help };
  });
}

/** The one-age form as typed. */
export type OneAgeInput = { age: string; error: string; curve: string; deltaR: string; deltaRError: string };
export type OneAgeField = "age" | "error" | "curve" | "delta_r" | "delta_r_error";

/**
 * The one typed age as an item, or each field's problem in the form's words. Nothing typed gives
 * neither. ΔR counts only on a marine curve.
 */
export function readOneAge(
  input: OneAgeInput,
  curves: CurveChoice[],
): { item?: CalibrationItem; problems: { field: OneAgeField; message: string }[] } {
  if (input.age.trim() === "" && input.error.trim() === "") return { problems: [] };
  const problems: { field: OneAgeField; message: string }[] = [];
  const number = (field: OneAgeField, column: SheetColumn, text: string) => {
    const r = readNumber(text, spec(column));
    if (r.issue) problems.push({ field, message: inFormWords(r.issue) });
    return r.value;
  };
  const curve = input.curve.toLowerCase();
  const kind = curves.find((c) => c.name === curve)?.kind;
  if (!kind)
    problems.push({ field: "curve", message: `Choose one of the curves listed (${curves.map((c) => c.name).join(", ")}).` });
  const age = number("age", "c14_age", input.age);
  const error = number("error", "c14_error", input.error);
  if (age === undefined && !problems.some((p) => p.field === "age"))
    problems.push({ field: "age", message: "Give the ¹⁴C age in ¹⁴C yr BP." });
  if (error === undefined && !problems.some((p) => p.field === "error"))
    problems.push({ field: "error", message: "Give the 1σ error of the age in ¹⁴C yr." });
  if (error !== undefined && !(error > 0)) problems.push({ field: "error", message: "The error must be more than 0." });
  const marine = kind === "marine";
  const deltaR = marine ? number("delta_r", "delta_r", input.deltaR) : undefined;
  const deltaRError = marine ? number("delta_r_error", "delta_r_error", input.deltaRError) : undefined;
  if (deltaRError !== undefined && deltaRError < 0)
    problems.push({ field: "delta_r_error", message: "The ΔR error must be 0 or more." });
  if (error !== undefined && error > MAX_SIGMA_YR) problems.push({ field: "error", message: tooUncertain("The error", error) });
  if (deltaRError !== undefined && deltaRError > MAX_SIGMA_YR)
    problems.push({ field: "delta_r_error", message: tooUncertain("The ΔR error", deltaRError) });
  if (problems.length) return { problems };
  const item: CalibrationItem = { id: "1", c14_age: age!, c14_error: error!, curve };
  if (deltaR !== undefined) item.delta_r = deltaR;
  if (deltaRError !== undefined) item.delta_r_error = deltaRError;
  return { item, problems };
}

// The calibration page's form as typed, and what it asks to calibrate: the one age, or each row of
// the sheet. Client-safe: the page reads it live in the browser; its action reads it the same way
// when the form is posted without script.

import { MAX_SHEET_ROWS, readCalibrationSheet, readOneAge, splitPastedSheet } from "#app/utils/calibrate-sheet.ts";
import type { CurveChoice, OneAgeField, ReadSheet, SheetDefaults, SheetRow } from "#app/utils/calibrate-sheet.ts";
import type { CalendarScale } from "#app/utils/calibrate-results.ts";

export type PageForm = {
  mode: "one" | "sheet";
  age: string;
  error: string;
  curve: string;
  deltaR: string;
  deltaRError: string;
  sheet: string;
  scale: CalendarScale;
};

export const EMPTY_FORM: PageForm = {
  mode: "one",
  age: "",
  error: "",
  curve: "intcal20",
  deltaR: "",
  deltaRError: "",
  sheet: "",
  scale: "bp",
};

/** The longest sheet text the page takes (a full template row is well under 400 characters). */
export const MAX_SHEET_CHARS = 2_000_000;

export function pageFormFrom(fields: { get(name: string): unknown }): PageForm {
  const text = (name: string, max = 200) => {
    const v = fields.get(name);
    return typeof v === "string" ? v.slice(0, max) : "";
  };
  return {
    mode: text("mode") === "sheet" ? "sheet" : "one",
    age: text("age"),
    error: text("error"),
    curve: (text("curve") || "intcal20").toLowerCase(),
    deltaR: text("delta_r"),
    deltaRError: text("delta_r_error"),
    sheet: text("sheet", MAX_SHEET_CHARS + 1),
    scale: text("scale") === "bcad" ? "bcad" : "bp",
  };
}

function plainNumber(text: string): number | undefined {
  const t = text.trim();
  return /^[-+−]?(\d+\.?\d*|\.\d+)$/.test(t) ? Number(t.replace("−", "-")) : undefined;
}

/** The page's curve and ΔR, for sheet rows that name neither. ΔR counts only on a marine curve. */
export function sheetDefaults(form: PageForm, curves: CurveChoice[]): SheetDefaults {
  const marine = curves.some((c) => c.name === form.curve && c.kind === "marine");
  const deltaR = marine ? plainNumber(form.deltaR) : undefined;
  return {
    curve: form.curve,
    deltaR,
    deltaRError: deltaR !== undefined ? plainNumber(form.deltaRError) : undefined,
  };
}

export type PageReading = {
  /** The rows to show, each with its item or its problems. */
  rows: SheetRow[];
  /** The sheet as read (mode "sheet"), for its notices and problems. */
  sheet: ReadSheet | null;
  /** The one-age fields' problems (mode "one"). */
  fieldProblems: { field: OneAgeField; message: string }[];
};

/** What the form asks to calibrate, with every problem at the field or row and column it concerns. */
export function readPageForm(form: PageForm, curves: CurveChoice[]): PageReading {
  if (form.mode === "one") {
    const one = readOneAge(form, curves);
    return {
      rows: one.item ? [{ row: 1, label: "Your age", item: one.item, problems: [] }] : [],
      sheet: null,
      fieldProblems: one.problems,
    };
  }
  if (form.sheet.length > MAX_SHEET_CHARS) {
    const problem = `The sheet is longer than ${MAX_SHEET_CHARS.toLocaleString("en")} characters; calibrate it in parts.`;
    return {
      rows: [],
      sheet: { rows: [], headerRow: null, used: [], setAside: [], unknown: [], problems: [problem] },
      fieldProblems: [],
    };
  }
  const split = splitPastedSheet(form.sheet, MAX_SHEET_ROWS);
  const sheet = readCalibrationSheet(split.rows, { defaults: sheetDefaults(form, curves), curves, more: split.more });
  return { rows: sheet.rows, sheet, fieldProblems: [] };
}

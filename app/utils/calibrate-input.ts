// Shapes of the public calibration API and the parser for ages typed or pasted on the
// calibration page. Client-safe: the page uses these in the browser, the server in its action.

export const MAX_CALIBRATION_ITEMS = 10_000;

/** One item of `POST /api/v1/calibrate`. */
export type CalibrationItem = {
  id: string;
  c14_age: number;
  c14_error: number;
  curve: string;
  delta_r?: number;
  delta_r_error?: number;
};

export type ApiRange = { from: number; to: number; p: number };
export type ApiDensity = { start_cal_bp: number; step: 1; values: number[] };
export type ApiResult =
  | { id: string | number; median_cal_bp: number; hpd68: ApiRange[]; hpd95: ApiRange[]; density?: ApiDensity }
  | { id: string | number | null; error: string };
export type ApiResponse = { curves: Record<string, { version: string; citation: string }>; results: ApiResult[] };

export function isCalibrated(r: ApiResult): r is Extract<ApiResult, { median_cal_bp: number }> {
  return "median_cal_bp" in r;
}

export type InputDefaults = { curve: string; deltaR?: number; deltaRError?: number };

/** A line of the pasted list: an item ready for the API, or a message saying what is wrong with it. */
export type InputEntry = { line: number; id: string; item: CalibrationItem } | { line: number; id: string; error: string };

const PLUS_MINUS = /^\s*([^\s±+]+)\s*(?:±|\+\/-|\+-)\s*(\S+)\s*$/;

function number(text: string | undefined): number | null {
  if (text === undefined) return null;
  const t = text.trim().replace(/\s/g, "");
  if (t === "" || !/^[-+]?(\d+\.?\d*|\.\d+)(e[-+]?\d+)?$/i.test(t)) return null;
  return Number(t);
}

function splitFields(line: string): string[] {
  const sep = line.includes("\t") ? "\t" : line.includes(";") && !line.includes(",") ? ";" : ",";
  return line.split(sep).map((f) => f.trim());
}

function looksLikeHeader(fields: string[]): boolean {
  return fields.length >= 2 && number(fields[0]) === null && number(fields[1]) === null && /age/i.test(fields.join(" "));
}

/**
 * Parses ages typed one per line: `id, age, error[, curve, delta_r, delta_r_error]`, `age, error`
 * or `age ± error` (also `+/-`). Tabs or semicolons may separate fields instead of commas. Blank
 * lines and lines starting with # are skipped, and so is a header line. A line without a curve
 * takes the default curve and its ΔR; a line naming the default curve without a ΔR takes the
 * default ΔR too.
 */
export function parseCalibrationInput(text: string, defaults: InputDefaults): InputEntry[] {
  const entries: InputEntry[] = [];
  const lines = text.split(/\r\n|\n|\r/);
  let counter = 0;
  for (let i = 0; i < lines.length; i++) {
    const raw = lines[i]!.trim();
    if (raw === "" || raw.startsWith("#")) continue;
    const lineNo = i + 1;
    const pm = PLUS_MINUS.exec(raw);
    let id: string;
    let age: string | undefined;
    let error: string | undefined;
    let curve: string | undefined;
    let dr: string | undefined;
    let drErr: string | undefined;
    counter++;
    if (pm && !raw.includes(",")) {
      id = String(counter);
      age = pm[1];
      error = pm[2];
    } else {
      const fields = splitFields(raw);
      if (entries.length === 0 && looksLikeHeader(fields)) {
        counter--;
        continue;
      }
      if (fields.length === 2) {
        id = String(counter);
        [age, error] = fields;
      } else if (fields.length === 1) {
        entries.push({
          line: lineNo,
          id: String(counter),
          error: `Line ${lineNo}: give an age and its error, e.g. "10250 ± 45".`,
        });
        continue;
      } else {
        [id, age, error, curve, dr, drErr] = fields as [string, string, string, string?, string?, string?];
        if (id === "") id = String(counter);
        if (fields.length > 6) {
          entries.push({
            line: lineNo,
            id,
            error: `Line ${lineNo} has ${fields.length} fields; at most 6 are read (id, age, error, curve, ΔR, ΔR error).`,
          });
          continue;
        }
      }
    }
    const ageN = number(age);
    const errN = number(error);
    if (ageN === null) {
      entries.push({ line: lineNo, id, error: `Line ${lineNo}: the age "${age ?? ""}" is not a number.` });
      continue;
    }
    if (errN === null) {
      entries.push({ line: lineNo, id, error: `Line ${lineNo}: the error "${error ?? ""}" is not a number.` });
      continue;
    }
    const curveName = (curve && curve !== "" ? curve : defaults.curve).toLowerCase();
    const item: CalibrationItem = { id, c14_age: ageN, c14_error: errN, curve: curveName };
    if (dr !== undefined && dr !== "") {
      const drN = number(dr);
      if (drN === null) {
        entries.push({ line: lineNo, id, error: `Line ${lineNo}: ΔR "${dr}" is not a number.` });
        continue;
      }
      item.delta_r = drN;
      if (drErr !== undefined && drErr !== "") {
        const drErrN = number(drErr);
        if (drErrN === null) {
          entries.push({ line: lineNo, id, error: `Line ${lineNo}: the ΔR error "${drErr}" is not a number.` });
          continue;
        }
        item.delta_r_error = drErrN;
      }
    } else if (curveName === defaults.curve.toLowerCase() && defaults.deltaR !== undefined) {
      item.delta_r = defaults.deltaR;
      if (defaults.deltaRError !== undefined) item.delta_r_error = defaults.deltaRError;
    }
    entries.push({ line: lineNo, id, item });
  }
  return entries;
}

/** The calibration page's form, as typed (strings, before parsing). */
export type PageInput = {
  mode: "one" | "list";
  age: string;
  error: string;
  curve: string;
  deltaR: string;
  deltaRError: string;
  list: string;
};

export function pageInputFrom(form: { get(name: string): unknown }): PageInput {
  const text = (name: string) => {
    const v = form.get(name);
    return typeof v === "string" ? v : "";
  };
  return {
    mode: text("mode") === "list" ? "list" : "one",
    age: text("age"),
    error: text("error"),
    curve: text("curve") || "intcal20",
    deltaR: text("delta_r"),
    deltaRError: text("delta_r_error"),
    list: text("list"),
  };
}

/**
 * What the page calibrates: the one typed age, or each line of the list. ΔR fields count only
 * for a marine curve (`marine` says whether the chosen curve is one). An empty form gives no entries.
 */
export function entriesFromPageInput(input: PageInput, marine: boolean): InputEntry[] {
  const dr = marine ? number(input.deltaR) : null;
  const drErr = marine ? number(input.deltaRError) : null;
  if (input.mode === "list") {
    return parseCalibrationInput(input.list, {
      curve: input.curve,
      deltaR: dr ?? undefined,
      deltaRError: dr !== null ? (drErr ?? undefined) : undefined,
    });
  }
  if (input.age.trim() === "" && input.error.trim() === "") return [];
  const age = number(input.age);
  const error = number(input.error);
  if (age === null) return [{ line: 1, id: "1", error: `The age "${input.age}" is not a number.` }];
  if (error === null) return [{ line: 1, id: "1", error: `The error "${input.error}" is not a number.` }];
  if (marine && input.deltaR.trim() !== "" && dr === null) {
    return [{ line: 1, id: "1", error: `ΔR "${input.deltaR}" is not a number.` }];
  }
  if (marine && input.deltaRError.trim() !== "" && drErr === null) {
    return [{ line: 1, id: "1", error: `The ΔR error "${input.deltaRError}" is not a number.` }];
  }
  const item: CalibrationItem = { id: "1", c14_age: age, c14_error: error, curve: input.curve.toLowerCase() };
  if (dr !== null) item.delta_r = dr;
  if (drErr !== null) item.delta_r_error = drErr;
  return [{ line: 1, id: "1", item }];
}

export type CalibratedResult = Extract<ApiResult, { median_cal_bp: number }>;
/** One row of the results table: the line as read, and its result or what went wrong. */
export type TableRow = { line: number; id: string; item?: CalibrationItem; result?: CalibratedResult; error?: string };

/** Lines that did not parse keep their message; the others take the API's results in order. */
export function mergeResults(entries: InputEntry[], results: ApiResult[] | undefined): TableRow[] {
  let k = 0;
  return entries.map((e) => {
    if ("error" in e) return { line: e.line, id: e.id, error: e.error };
    const r = results?.[k++];
    if (!r) return { line: e.line, id: e.id, item: e.item };
    if (isCalibrated(r)) return { line: e.line, id: e.id, item: e.item, result: r };
    return { line: e.line, id: e.id, item: e.item, error: r.error };
  });
}

export function hasItem(e: InputEntry): e is Extract<InputEntry, { item: CalibrationItem }> {
  return "item" in e;
}

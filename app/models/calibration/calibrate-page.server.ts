import type { Db } from "#app/db/client.server.ts";
import { calibrateItems } from "#app/models/calibration/calibrate-items.server.ts";
import { plotForItem, type CalibrationPlotData } from "#app/models/calibration/calibration-plot.server.ts";
import { listCurves } from "#app/models/calibration/curves.server.ts";
import { FileIntakeError, type ReceivedFile, withReceivedFiles } from "#app/models/files/intake.server.ts";
import { CalibrationStopped, planCalibration, stoppedCalibrationMessage } from "#app/models/calibration/calibrate-work.server.ts";
import { groupThousands } from "#app/science/calendar.ts";
import { CALIBRATE_WORK_BUDGET, MAX_REQUEST_WORK, OFF_THREAD_WORK } from "#app/utils/calibrate-limits.ts";
import { env } from "#app/utils/env.server.ts";
import { spend } from "#app/utils/rate-limit.server.ts";
import { databaseFileOf, runInWorker, TaskStopped, WorkerError } from "#app/workers/pool.server.ts";
import { isCalibrated, type CalibrationItem } from "#app/utils/calibrate-input.ts";
import { MAX_SHEET_CHARS, pageFormFrom, readPageForm, EMPTY_FORM, type PageForm } from "#app/utils/calibrate-page-form.ts";
import {
  joinResults,
  sparkFromDensity,
  type CurvesUsed,
  type PageResult,
  type ResultRow,
  type Summary,
} from "#app/utils/calibrate-results.ts";
import { sheetText, type CurveChoice, type NumberedRow, type OneAgeField, type ReadSheet } from "#app/utils/calibrate-sheet.ts";

/*
 * The public calibration page's server side: calibrating a slice of a sheet for the results table
 * (summaries with sparkline densities, nothing stored), the large plot of one age, and reading a
 * dropped CSV/XLSX file through the shared intake and the upload's guarded reader, off the request
 * thread. Calls the same calibration as POST /api/v1/calibrate (calibrateItems).
 */

/** Most items the page's script sends in one request; a long sheet goes in slices, with progress. */
export const PAGE_BATCH_ITEMS = 100;
/** Largest sheet file the page reads. */
export const SHEET_FILE_MAX_BYTES = 4 * 1024 * 1024;
/** How long reading one dropped file may take. */
const READ_TIME_LIMIT_MS = 10_000;

export type PageCurve = CurveChoice & { displayName: string; version: string };

export function pageCurves(db: Db): PageCurve[] {
  return listCurves(db)
    .filter((c) => c.active)
    .map((c) => ({ name: c.name, displayName: c.displayName, kind: c.kind, version: c.version }));
}

/** Calibrates items as the API does, each with its summary and a sparkline instead of the whole density. */
export function calibrateForPage(db: Db, items: unknown[]): { curves: CurvesUsed; results: PageResult[] } {
  const { curves, results } = calibrateItems(db, items, { density: true });
  return {
    curves,
    results: results.map((r): PageResult => {
      if (!isCalibrated(r)) return r;
      const spark = r.density
        ? sparkFromDensity(r.density.start_cal_bp, r.density.values)
        : { older: r.median_cal_bp, younger: r.median_cal_bp, values: [] };
      return { id: r.id, median_cal_bp: r.median_cal_bp, hpd68: r.hpd68, hpd95: r.hpd95, spark };
    }),
  };
}

export type WorkRefused = { status: 400 | 413 | 429; message: string; retryAfterS?: number };

/**
 * The work of calibrating these items for the page, counted as the API counts it (items × the
 * calendar span each calibrates over; utils/calibrate-limits.ts) before any of it is done, and
 * spent from the address's own budget for the page, which holds as much as the API's.
 */
export function spendPageWork(db: Db, items: unknown[], address: string): { work: number } | WorkRefused {
  const plan = planCalibration(db, items);
  if (plan.problems.length > 0) return { status: 400, message: plan.problems.map((p) => p.message).join(" ") };
  if (plan.work > MAX_REQUEST_WORK) {
    return {
      status: 413,
      message: `These ages are too much work to calibrate at once (${groupThousands(plan.work)} units; at most ${groupThousands(MAX_REQUEST_WORK)}). Split the sheet.`,
    };
  }
  const budget = spend(
    `page.calibrate.work:${address}`,
    plan.work,
    CALIBRATE_WORK_BUDGET.capacity,
    CALIBRATE_WORK_BUDGET.refillMs,
  );
  if (!budget.allowed) {
    return {
      status: 429,
      message: `Too much calibration from this address in the last minute; try again in ${budget.retryAfterS} s.`,
      retryAfterS: budget.retryAfterS,
    };
  }
  return { work: plan.work };
}

/** calibrateForPage, in the intake thread when the work is large, so the server keeps answering meanwhile. */
export async function calibrateForPageAnywhere(
  db: Db,
  items: unknown[],
  work: number,
): Promise<{ curves: CurvesUsed; results: PageResult[] }> {
  const dbFile = databaseFileOf(db);
  if (work <= OFF_THREAD_WORK || !dbFile) return calibrateForPage(db, items);
  try {
    return await runInWorker("intake", "calibrateForPage", dbFile, { items }, { timeoutMs: env().WORKER_TIME_LIMIT_MS });
  } catch (error) {
    if (error instanceof TaskStopped) throw new CalibrationStopped(stoppedCalibrationMessage(error));
    throw error;
  }
}

/**
 * The large plot of one item, its legend carrying exactly the summary the table shows (the
 * table's median and ranges, not a second rounding of them).
 */
export function plotForPage(db: Db, item: CalibrationItem, summary: Summary): CalibrationPlotData | null {
  const plot = plotForItem(db, item);
  if (!plot) return null;
  return {
    ...plot,
    calibration: { ...plot.calibration, medianCalBp: summary.median_cal_bp, hpd68: summary.hpd68, hpd95: summary.hpd95 },
  };
}

export class SheetFileError extends Error {
  constructor(
    message: string,
    readonly status = 400,
  ) {
    super(message);
  }
}

/**
 * A received CSV or XLSX file as numbered rows (the header row first), read in the intake thread
 * by the upload's reader: workbooks counted as they unpack, at most 50,000 rows, formulas and dates
 * marked. Throws SheetFileError with a message for people.
 */
export async function readSheetFile(
  file: Pick<ReceivedFile, "path" | "name">,
): Promise<{ rows: NumberedRow[]; notices: string[] }> {
  try {
    const sheet = await runInWorker(
      "intake",
      "readSheet",
      null,
      { path: file.path, fileName: file.name },
      { timeoutMs: READ_TIME_LIMIT_MS },
    );
    return { rows: [{ n: sheet.headerRow, cells: sheet.headers }, ...sheet.rows], notices: sheet.notices };
  } catch (error) {
    if (error instanceof WorkerError && error.errorName === "UploadError") {
      throw new SheetFileError(`${file.name}: ${error.message}`, error.status ?? 400);
    }
    if (error instanceof TaskStopped) {
      throw new SheetFileError(
        `${file.name}: reading this file took too long or needed too much memory, so it was stopped. Save it as CSV or split it.`,
      );
    }
    if (error instanceof FileIntakeError) throw new SheetFileError(error.message, error.status);
    throw error;
  }
}

/** Rows the page calibrates in one post without script (with script, a sheet goes in slices). */
export const NO_SCRIPT_MAX_ROWS = 1_000;

export type ReceivedPageForm = { form: PageForm; plotRow: number | null; fileNote: string | null; problem: string | null };

/**
 * The page's form as posted without script: multipart (with a file, read into the sheet box) through
 * the shared intake, or URL-encoded. A file that cannot be read is a problem for the page to show.
 */
export async function receivePageForm(request: Request): Promise<ReceivedPageForm> {
  const plotRowOf = (v: unknown) => (typeof v === "string" && /^\d{1,6}$/.test(v) ? Number(v) : null);
  if (!/^multipart\/form-data\b/i.test(request.headers.get("Content-Type") ?? "")) {
    const fields = await request.formData();
    return { form: pageFormFrom(fields), plotRow: plotRowOf(fields.get("plot_row")), fileNote: null, problem: null };
  }
  try {
    return await withReceivedFiles(
      request,
      {
        maxFileBytes: SHEET_FILE_MAX_BYTES,
        accept: ["csv", "xlsx"],
        requireFile: false,
        maxFields: 20,
        maxFieldBytes: MAX_SHEET_CHARS * 2,
      },
      async (got) => {
        const form = pageFormFrom(got.fields);
        const plotRow = plotRowOf(got.fields.get("plot_row"));
        const file = got.files[0];
        if (!file) return { form, plotRow, fileNote: null, problem: null };
        const read = await readSheetFile(file);
        const rows = Math.max(0, read.rows.length - 1);
        return {
          form: { ...form, mode: "sheet" as const, sheet: sheetText(read.rows) },
          plotRow,
          fileNote: [
            `Read ${file.name}: ${rows.toLocaleString("en")} ${rows === 1 ? "row" : "rows"} below the header.`,
            ...read.notices,
          ].join(" "),
          problem: null,
        };
      },
    );
  } catch (error) {
    if (error instanceof SheetFileError || error instanceof FileIntakeError) {
      return { form: { ...EMPTY_FORM, mode: "sheet" }, plotRow: null, fileNote: null, problem: error.message };
    }
    throw error;
  }
}

export type PageAnswer = {
  form: PageForm;
  rows: ResultRow[];
  sheet: Omit<ReadSheet, "rows"> | null;
  fieldProblems: { field: OneAgeField; message: string }[];
  curves: CurvesUsed;
  plot: CalibrationPlotData | null;
  plotRow: number | null;
  fileNote: string | null;
  problem: string | null;
  /** The HTTP status to answer with (400, 413 or 429 with a problem). */
  status: number;
};

/**
 * Calibrates what the posted form asks (at most NO_SCRIPT_MAX_ROWS rows, the work spent from the
 * address's budget) and draws one row's plot.
 */
export async function answerPageForm(
  db: Db,
  received: ReceivedPageForm,
  options: { plot?: boolean; address: string },
): Promise<PageAnswer> {
  const { form, plotRow, fileNote } = received;
  const reading = readPageForm(form, pageCurves(db));
  const base = {
    form,
    sheet: reading.sheet ? withoutRows(reading.sheet) : null,
    fieldProblems: reading.fieldProblems,
    fileNote,
  };
  const items = reading.rows.flatMap((r) => (r.item ? [r.item] : []));
  const refuse = (status: number, problem: string): PageAnswer => ({
    ...base,
    rows: received.problem ? [] : reading.rows,
    curves: {},
    plot: null,
    plotRow: null,
    problem,
    status,
  });
  if (received.problem) return refuse(400, received.problem);
  if (items.length > NO_SCRIPT_MAX_ROWS) {
    return refuse(
      400,
      `Without script the page calibrates at most ${NO_SCRIPT_MAX_ROWS.toLocaleString("en")} rows at a time; this sheet has ${items.length.toLocaleString("en")}. Split it, or turn on JavaScript.`,
    );
  }
  const spent = items.length ? spendPageWork(db, items, options.address) : { work: 0 };
  if ("message" in spent) return refuse(spent.status, spent.message);
  let calibrated: Awaited<ReturnType<typeof calibrateForPageAnywhere>>;
  try {
    calibrated = await calibrateForPageAnywhere(db, items, spent.work);
  } catch (error) {
    if (error instanceof CalibrationStopped) return refuse(error.status, error.message);
    throw error;
  }
  const { curves, results } = calibrated;
  const rows = joinResults(reading.rows, results);
  const chosen = rows.find((r) => r.row === plotRow && r.result) ?? rows.find((r) => r.result);
  const plot = options.plot !== false && chosen?.item && chosen.result ? plotForPage(db, chosen.item, chosen.result) : null;
  return { ...base, rows, curves, plot, plotRow: plot ? chosen!.row : null, problem: null, status: 200 };
}

function withoutRows(sheet: ReadSheet): Omit<ReadSheet, "rows"> {
  const { rows: _rows, ...rest } = sheet;
  return rest;
}

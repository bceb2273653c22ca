// Model-run files out of a request, shared by the /runs page and the API. The multipart body is
// streamed by the file intake (models/files/) to a private temporary folder, with the size limit
// enforced while the bytes arrive; each file is told by its content (NetCDF-3, NetCDF-4/HDF5 or
// GeoJSON) and an optional parameters CSV is matched to the file names. Every file is checked
// before any is kept, and the temporary folder is removed whatever happens.

import { readFile } from "node:fs/promises";
import Papa from "papaparse";
import type { Db } from "#app/db/client.server.ts";
import { FileIntakeError, withReceivedFiles, type ReceivedFile } from "#app/models/files/intake.server.ts";
import { formatBytes } from "#app/utils/format-bytes.ts";
import type { FileKind } from "#app/models/files/sniff.server.ts";
import { env } from "#app/utils/env.server.ts";
import { ModelRunFileError } from "./errors.ts";
import { checkRunFile, createRun, deleteRun, type ModelRunRow, type NewRun } from "./runs.server.ts";

export class IntakeError extends Error {
  constructor(
    message: string,
    readonly status = 400,
    readonly problems: { file: string; message: string; code?: string }[] = [],
  ) {
    super(message);
  }
}

/** A run file received into the intake's temporary folder. */
export type RunUpload = { name: string; path: string };

export type ReceivedRuns = {
  runs: RunUpload[];
  /** The parameters CSV's text, when one was sent (the page's `parameters_csv` field). */
  parametersCsv: string | null;
  /** The request's text fields. */
  fields: URLSearchParams;
};

/** Kinds of file a model run may be (by content); plain JSON is let through for the margins reader to explain. */
const RUN_KINDS: readonly FileKind[] = ["netcdf3", "hdf5", "geojson", "json"];
const PARAMETERS_CSV_MAX_BYTES = 1024 * 1024;

/** Largest model-run file taken from a request (the MODEL_RUN_MAX_BYTES setting). */
export const modelRunMaxBytes = () => env().MODEL_RUN_MAX_BYTES;

/**
 * Receives a model-run upload: at most `maxFiles` run files in the field `file` (and, with
 * `parametersCsv`, one CSV in `parameters_csv`), streamed to a temporary folder that exists while
 * `fn` runs. Intake problems (past the size limit: 413; not multipart: 415) become IntakeError.
 */
export async function withReceivedRuns<T>(
  request: Request,
  options: { maxFiles: number; parametersCsv?: boolean },
  fn: (received: ReceivedRuns) => Promise<T>,
): Promise<T> {
  const maxFileBytes = modelRunMaxBytes();
  try {
    return await withReceivedFiles(
      request,
      {
        maxFileBytes,
        maxFiles: options.maxFiles + (options.parametersCsv ? 1 : 0),
        fileFields: options.parametersCsv ? ["file", "parameters_csv"] : ["file"],
        maxFields: 20,
        requireFile: false,
        overLimitAdvice: "Score larger runs where they live with npm run score.",
      },
      async ({ files, fields }) => {
        const runs = files.filter((f) => f.field === "file");
        const csvFiles = files.filter((f) => f.field === "parameters_csv");
        if (runs.length > options.maxFiles)
          throw new IntakeError(`At most ${options.maxFiles} run files may be sent at once.`, 413);
        if (csvFiles.length > 1) throw new IntakeError("Send one parameters CSV.");
        const wrong = runs.filter((f) => !RUN_KINDS.includes(f.sniffed.kind));
        if (wrong.length) {
          const problems = wrong.map((f) => ({
            file: f.name,
            message: `this file looks like ${f.sniffed.describe}; a model run is a NetCDF (3 or 4) or GeoJSON file.`,
            code: "not-a-run",
          }));
          throw new IntakeError(problems.map((p) => `${p.file}: ${p.message}`).join(" "), 400, problems);
        }
        const parametersCsv = csvFiles[0] ? await readParametersCsv(csvFiles[0]) : null;
        return fn({ runs: runs.map((f) => ({ name: f.name, path: f.path })), parametersCsv, fields });
      },
    );
  } catch (e) {
    if (e instanceof FileIntakeError) {
      throw new IntakeError(e.message, e.status, e.subject ? [{ file: e.subject, message: e.message }] : []);
    }
    throw e;
  }
}

async function readParametersCsv(f: ReceivedFile): Promise<string> {
  if (f.size > PARAMETERS_CSV_MAX_BYTES) {
    throw new IntakeError(`${f.name}: the parameters CSV is larger than ${formatBytes(PARAMETERS_CSV_MAX_BYTES)}.`, 413);
  }
  if (f.sniffed.kind !== "csv") {
    throw new IntakeError(`${f.name}: the parameters file looks like ${f.sniffed.describe}, not a CSV.`);
  }
  const bytes = await readFile(f.path);
  return new TextDecoder(f.sniffed.encoding ?? "utf-8").decode(bytes);
}

/** Parameters CSV: a `run` column matching file names (with or without extension), then one column per parameter. */
export function parseParametersCsv(text: string): Map<string, Record<string, number | string>> {
  const parsed = Papa.parse<Record<string, string>>(text.replace(/^\uFEFF/, ""), { header: true, skipEmptyLines: true });
  const fields = parsed.meta.fields ?? [];
  if (!fields.includes("run")) throw new IntakeError('The parameters CSV needs a "run" column naming each file.');
  const out = new Map<string, Record<string, number | string>>();
  parsed.data.forEach((row, i) => {
    const run = (row.run ?? "").trim();
    if (!run) throw new IntakeError(`Parameters CSV row ${i + 2}: the run column is empty.`);
    const params: Record<string, number | string> = {};
    for (const f of fields) {
      if (f === "run" || row[f] === undefined || row[f].trim() === "") continue;
      const n = Number(row[f]);
      params[f] = Number.isFinite(n) ? n : row[f].trim().slice(0, 200);
    }
    out.set(run, params);
  });
  return out;
}

export const stem = (name: string) => name.replace(/\.(nc|nc4|netcdf|geojson|json)$/i, "");

export interface IntakeOptions extends Omit<NewRun, "filePath" | "fileName" | "name" | "parameters"> {
  /** Name for a single run; several files are named after their files. */
  name?: string | null;
  parameters?: Record<string, number | string> | null;
  parametersCsv?: string | null;
  /** Keep files whose time units need an offset, waiting for the time-mapping step (the page does; the API refuses them). */
  keepUnmapped?: boolean;
}

/** Checks every received file, then keeps and queues them all; a bad file keeps nothing. */
export async function intakeRuns(db: Db, files: RunUpload[], o: IntakeOptions): Promise<ModelRunRow[]> {
  if (!files.length) throw new IntakeError('Choose at least one run file (field "file").');
  const table = o.parametersCsv ? parseParametersCsv(o.parametersCsv) : null;
  const staged: NewRun[] = files.map((f, i) => {
    const fileName = f.name || `run-${i + 1}`;
    const params = table ? (table.get(fileName) ?? table.get(stem(fileName)) ?? null) : (o.parameters ?? null);
    return { ...o, name: files.length === 1 && o.name ? o.name : stem(fileName), filePath: f.path, fileName, parameters: params };
  });
  if (table) {
    const missing = staged.filter((s) => !s.parameters).map((s) => s.fileName);
    if (missing.length) throw new IntakeError(`The parameters CSV has no row for ${missing.join(", ")}.`);
  }
  const problems: { file: string; message: string; code?: string }[] = [];
  for (const s of staged) {
    try {
      await checkRunFile(db, s, o.keepUnmapped);
    } catch (e) {
      if (!(e instanceof ModelRunFileError)) throw e;
      problems.push({ file: s.fileName, message: e.message, code: e.code });
    }
  }
  if (problems.length) {
    const status = problems.some((p) => p.code === "too-large") ? 413 : 400;
    throw new IntakeError(problems.map((p) => `${p.file}: ${p.message}`).join(" "), status, problems);
  }
  const created: ModelRunRow[] = [];
  try {
    for (const s of staged) created.push(await createRun(db, s, o.keepUnmapped));
  } catch (e) {
    for (const r of created) deleteRun(db, r.id);
    throw e;
  }
  return created;
}

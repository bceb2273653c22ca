// Model-run files out of a request, shared by the /runs page and the API: size checks before
// and after reading, each file written to a private temporary folder for the readers, an
// optional parameters CSV matched to the file names. Every file is checked before any is kept.

import { mkdtempSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import Papa from "papaparse";
import type { Db } from "#app/db/client.server.ts";
import { ModelRunFileError } from "./errors.ts";
import { MODEL_RUN_MAX_BYTES } from "./run-file.server.ts";
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

const ENVELOPE = 256 * 1024;

export async function readForm(request: Request, maxFiles = 200): Promise<FormData> {
  const declared = Number(request.headers.get("Content-Length") ?? 0);
  if (declared > maxFiles * MODEL_RUN_MAX_BYTES + ENVELOPE) throw new IntakeError("The upload is past the size limit.", 413);
  if (!(request.headers.get("Content-Type") ?? "").toLowerCase().startsWith("multipart/form-data")) {
    throw new IntakeError('Send the run as multipart/form-data with the file in a field named "file".', 415);
  }
  try {
    return await request.formData();
  } catch {
    throw new IntakeError("The upload could not be read as multipart/form-data.");
  }
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

/** Checks every file, then keeps and queues them all; a bad file keeps nothing. */
export async function intakeRuns(db: Db, files: File[], o: IntakeOptions): Promise<ModelRunRow[]> {
  if (!files.length) throw new IntakeError('Choose at least one run file (field "file").');
  const table = o.parametersCsv ? parseParametersCsv(o.parametersCsv) : null;
  const dir = mkdtempSync(join(tmpdir(), "thawline-run-"));
  try {
    const staged = await Promise.all(
      files.map(async (f, i) => {
        if (f.size > (o.maxBytes ?? MODEL_RUN_MAX_BYTES)) {
          throw new IntakeError(
            `${f.name}: the file is past the ${Math.round((o.maxBytes ?? MODEL_RUN_MAX_BYTES) / 1048576)} MB limit.`,
            413,
          );
        }
        const path = join(dir, `${i}`);
        writeFileSync(path, Buffer.from(await f.arrayBuffer()));
        const fileName = f.name || `run-${i + 1}`;
        const params = table ? (table.get(fileName) ?? table.get(stem(fileName)) ?? null) : (o.parameters ?? null);
        const input: NewRun = {
          ...o,
          name: files.length === 1 && o.name ? o.name : stem(fileName),
          filePath: path,
          fileName,
          parameters: params,
        };
        return input;
      }),
    );
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
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}

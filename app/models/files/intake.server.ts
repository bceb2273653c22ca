// File intake: the files and fields of a multipart request, streamed to a private temporary folder
// with every limit enforced while the bytes arrive (the body is never held in memory), each file
// sniffed from its content, and everything removed afterwards. Used by spreadsheet uploads and
// model-run uploads alike.
//
//   const result = await withReceivedFiles(request, { maxFileBytes, accept: ["csv", "xlsx"] }, async (got) => {
//     const [file] = got.files;           // { field, name, path, size, sniffed }
//     const note = got.fields.get("note"); // text fields, as URLSearchParams
//     return readIt(file.path);
//   });                                    // the folder is gone here, whatever happened
//
// Problems throw FileIntakeError with the HTTP status to answer (413 past a limit, 415 not multipart,
// 400 otherwise) and a message for people.

import { createWriteStream } from "node:fs";
import { mkdtemp, rm } from "node:fs/promises";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { Readable } from "node:stream";
import { pipeline } from "node:stream/promises";
import busboy from "busboy";
import { type FileKind, type Sniffed, sniffFile } from "#app/models/files/sniff.server.ts";
import { formatBytes } from "#app/utils/format-bytes.ts";

export class FileIntakeError extends Error {
  constructor(
    message: string,
    readonly status = 400,
    /** The file (its name) or field the problem is about, when there is one. */
    readonly subject?: string,
  ) {
    super(message);
  }
}

export type IntakeOptions = {
  /** Largest size of one file, in bytes. */
  maxFileBytes: number;
  /** Most files in one request (default 1). */
  maxFiles?: number;
  /** Field names that may carry files (default ["file"]). */
  fileFields?: readonly string[];
  /** Most text fields (default 50) and the longest one, in bytes (default 64 KiB). */
  maxFields?: number;
  maxFieldBytes?: number;
  /** Kinds of file taken (by content, see sniff.server.ts); others are refused naming what they look like. */
  accept?: readonly FileKind[];
  /** Refuse a request without a file (default true). */
  requireFile?: boolean;
  /** Where the temporary folder is made (default: the system's temporary folder). */
  tempRoot?: string;
  /** What to tell the sender after "the file is over the size limit" (default: split it). */
  overLimitAdvice?: string;
};

export type ReceivedFile = {
  field: string;
  /** The name the sender gave, without any folder part, at most 200 characters. */
  name: string;
  /** The file on disk, in the intake's private folder (removed after withReceivedFiles). */
  path: string;
  size: number;
  sniffed: Sniffed;
};

export type Received = {
  files: ReceivedFile[];
  fields: URLSearchParams;
  /** The private folder holding the files. */
  dir: string;
  /** Removes the folder and everything in it; safe to call more than once. */
  cleanup(): Promise<void>;
};

const KiB = 1024;

/** The sender's file name without folders or control characters. */
export function cleanFileName(name: string | undefined, fallback: string): string {
  const base = (name ?? "").split(/[/\\]/).pop() ?? "";
  // eslint-disable-next-line no-control-regex -- control characters are exactly what a file name must lose
  const clean = base.replace(/[\u0000-\u001f\u007f]/g, "").trim();
  return clean.slice(0, 200) || fallback;
}

/** Receives a multipart request's files and fields; the caller must call `cleanup()` (or use withReceivedFiles). */
export async function receiveFiles(request: Request, options: IntakeOptions): Promise<Received> {
  const contentType = request.headers.get("Content-Type") ?? "";
  if (!/^multipart\/form-data\b/i.test(contentType)) {
    throw new FileIntakeError('Send the file as multipart/form-data in a field named "file".', 415);
  }
  if (!request.body) throw new FileIntakeError("The request has no body.");
  const dir = await mkdtemp(join(options.tempRoot ?? tmpdir(), "thawline-intake-"));
  let removed = false;
  const cleanup = async () => {
    if (removed) return;
    removed = true;
    await rm(dir, { recursive: true, force: true });
  };
  try {
    const streamed = await streamParts(request.body, contentType, dir, options);
    const fields = streamed.fields;
    // A file input left empty sends a part without a file name or bytes: nothing was chosen.
    const files = streamed.files.filter((f) => f.named || f.size > 0).map(({ named: _named, ...f }) => f);
    if ((options.requireFile ?? true) && files.length === 0) {
      throw new FileIntakeError(`Choose a file to upload (field "${(options.fileFields ?? ["file"])[0]}").`);
    }
    const received: ReceivedFile[] = [];
    for (const f of files) {
      const sniffed = await sniffFile(f.path);
      if (sniffed.kind === "empty") throw new FileIntakeError(`${f.name}: the file is empty.`, 400, f.name);
      if (options.accept && !options.accept.includes(sniffed.kind)) {
        throw new FileIntakeError(`${f.name}: this file looks like ${sniffed.describe}, which is not taken here.`, 400, f.name);
      }
      received.push({ ...f, sniffed });
    }
    return { files: received, fields, dir, cleanup };
  } catch (error) {
    await cleanup();
    throw error;
  }
}

/** Receives the files, runs `fn`, and removes the files whatever happens. */
export async function withReceivedFiles<T>(
  request: Request,
  options: IntakeOptions,
  fn: (received: Received) => Promise<T> | T,
): Promise<T> {
  const received = await receiveFiles(request, options);
  try {
    return await fn(received);
  } finally {
    await received.cleanup();
  }
}

type StreamedFile = Omit<ReceivedFile, "sniffed"> & { named: boolean };
type Streamed = { files: StreamedFile[]; fields: URLSearchParams };

function streamParts(body: ReadableStream<Uint8Array>, contentType: string, dir: string, o: IntakeOptions): Promise<Streamed> {
  const maxFiles = o.maxFiles ?? 1;
  const fileFields = o.fileFields ?? ["file"];
  const maxFields = o.maxFields ?? 50;
  const maxFieldBytes = o.maxFieldBytes ?? 64 * KiB;
  return new Promise<Streamed>((resolve, reject) => {
    const files: StreamedFile[] = [];
    const fields = new URLSearchParams();
    const writes: Promise<void>[] = [];
    const sinks: NodeJS.WritableStream[] = [];
    const source = Readable.fromWeb(body as import("node:stream/web").ReadableStream<Uint8Array>);
    let failed = false;
    let parser: busboy.Busboy;
    const fail = (error: unknown) => {
      if (failed) return;
      failed = true;
      source.unpipe();
      // Stop reading the body: whatever is still coming is not wanted.
      source.destroy();
      for (const sink of sinks) (sink as unknown as { destroy(): void }).destroy();
      reject(error instanceof FileIntakeError ? error : unreadable());
    };
    try {
      parser = busboy({
        headers: { "content-type": contentType },
        defParamCharset: "utf8",
        limits: {
          fileSize: o.maxFileBytes + 1,
          files: maxFiles,
          fields: maxFields,
          fieldSize: maxFieldBytes,
          parts: maxFiles + maxFields,
          headerPairs: 20,
        },
      });
    } catch {
      reject(unreadable());
      return;
    }
    parser.on("file", (field, stream, info) => {
      if (failed) return void stream.resume();
      const name = cleanFileName(info.filename, `file-${files.length + 1}`);
      if (!fileFields.includes(field)) {
        stream.resume();
        return fail(new FileIntakeError(`A file came in field "${field.slice(0, 40)}"; send it in "${fileFields[0]}".`));
      }
      const path = join(dir, String(files.length));
      const entry = { field, name, path, size: 0, named: !!info.filename };
      files.push(entry);
      stream.on("data", (chunk: Buffer) => (entry.size += chunk.length));
      stream.on("limit", () =>
        fail(
          new FileIntakeError(
            `${name}: the file is over the size limit; the limit is ${formatBytes(o.maxFileBytes)}. ${o.overLimitAdvice ?? "Split it into several files."}`,
            413,
            name,
          ),
        ),
      );
      const sink = createWriteStream(path, { flags: "wx", mode: 0o600 });
      sinks.push(sink);
      const written = pipeline(stream, sink);
      written.catch(fail);
      writes.push(written);
    });
    parser.on("field", (name, value, info) => {
      if (failed) return;
      if (info.valueTruncated || info.nameTruncated) {
        return fail(new FileIntakeError(`The field "${name.slice(0, 40)}" is longer than ${formatBytes(maxFieldBytes)}.`, 413));
      }
      fields.append(name, value);
    });
    parser.on("filesLimit", () =>
      fail(new FileIntakeError(`At most ${maxFiles} file${maxFiles === 1 ? "" : "s"} may be sent at once.`, 413)),
    );
    parser.on("fieldsLimit", () => fail(new FileIntakeError(`At most ${maxFields} fields may be sent at once.`, 413)));
    parser.on("partsLimit", () => fail(new FileIntakeError("The upload has too many parts.", 413)));
    parser.on("error", fail);
    parser.on("close", () => {
      Promise.all(writes).then(() => {
        if (!failed) resolve({ files, fields });
      }, fail);
    });
    // A body cut off (or refused by the server's streaming size limit) ends the intake too.
    source.on("error", (error) => fail(error?.name === "BodyTooLarge" ? tooLarge(error) : unreadable()));
    source.pipe(parser);
  });
}

function unreadable() {
  return new FileIntakeError('The upload could not be read; send the file as multipart/form-data in a field named "file".');
}

function tooLarge(error: Error & { limit?: number }) {
  return new FileIntakeError(`The request is larger than ${formatBytes(error.limit ?? 0)}.`, 413);
}

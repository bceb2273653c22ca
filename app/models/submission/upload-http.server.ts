// Reading an uploaded spreadsheet out of a request, shared by the upload page and the API: the
// file intake streams it to a private temporary file under the size limit (models/files/).
import { FileIntakeError, withReceivedFiles } from "#app/models/files/intake.server.ts";
import type { Sniffed } from "#app/models/files/sniff.server.ts";
import { UploadError } from "#app/models/submission/uploads/read-sheet.server.ts";
import { env } from "#app/utils/env.server.ts";

export type UploadedSheet = { name: string; path: string; size: number; sniffed: Sniffed };

/**
 * Receives the `file` field of a multipart request and runs `fn` on it while the temporary copy
 * exists; intake problems become UploadError (413 past the size limit, 415 not multipart).
 */
export async function withUploadedSheet<T>(request: Request, fn: (file: UploadedSheet) => Promise<T>): Promise<T> {
  try {
    return await withReceivedFiles(request, { maxFileBytes: env().UPLOAD_MAX_BYTES, maxFields: 10 }, ({ files }) =>
      fn(files[0]!),
    );
  } catch (e) {
    if (e instanceof FileIntakeError) throw new UploadError(e.message, e.status);
    throw e;
  }
}

// Reading an uploaded file out of a request, shared by the upload page and the API.
import { checkFileSize, UploadError } from "#app/models/submission/uploads/read-sheet.server.ts";
import { env } from "#app/utils/env.server.ts";

/** Room for the multipart envelope around the file. */
const ENVELOPE_BYTES = 64 * 1024;

/**
 * The `file` field of a multipart request as a Buffer. Refuses a request whose declared size is
 * over the limit before reading it, and a file over the limit after.
 */
export async function fileFromRequest(request: Request): Promise<{ name: string; bytes: Buffer }> {
  const declared = Number(request.headers.get("Content-Length") ?? 0);
  if (declared > env().UPLOAD_MAX_BYTES + ENVELOPE_BYTES) checkFileSize(declared - ENVELOPE_BYTES);
  const type = request.headers.get("Content-Type") ?? "";
  if (!type.toLowerCase().startsWith("multipart/form-data")) {
    throw new UploadError('Send the file as multipart/form-data in a field named "file".', 415);
  }
  let form: FormData;
  try {
    form = await request.formData();
  } catch {
    throw new UploadError('The upload could not be read; send the file as multipart/form-data in a field named "file".');
  }
  const file = form.get("file");
  if (!file || typeof file === "string") throw new UploadError('Choose a file to upload (field "file").');
  checkFileSize(file.size);
  if (file.size === 0) throw new UploadError("The file is empty.");
  return { name: file.name || "upload", bytes: Buffer.from(await file.arrayBuffer()) };
}

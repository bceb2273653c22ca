import type { Route } from "./+types/calibrate-file";
import { clientAddress } from "#app/auth/session.server.ts";
import { readSheetFile, SHEET_FILE_MAX_BYTES, SheetFileError } from "#app/models/calibration/calibrate-page.server.ts";
import { FileIntakeError, withReceivedFiles } from "#app/models/files/intake.server.ts";
import { json } from "#app/utils/http.server.ts";
import { hit } from "#app/utils/rate-limit.server.ts";

/**
 * POST /calibrate/file: a CSV or XLSX file dropped on the calibration page, answered with its rows
 * (numbered, the header first) for the page to read and calibrate. Nothing is kept: the file goes
 * through the shared intake (size limit while streaming, sniffed by content) and the upload's
 * guarded reader in the intake thread, and is removed at once.
 */
export async function loader(_: Route.LoaderArgs) {
  // Public route; only the page's POST reads a file.
  return json({ error: "Drop the file on the calibration page." }, { status: 405, headers: { Allow: "POST" } });
}

export async function action({ request }: Route.ActionArgs) {
  // Public route: the access check is the per-address rate limit.
  const limited = hit(`page.calibrate-file:${clientAddress(request)}`, 30, 60_000);
  if (!limited.allowed) {
    return json(
      { error: `Too many files; try again in ${limited.retryAfterS} s.` },
      { status: 429, headers: { "Retry-After": String(limited.retryAfterS) } },
    );
  }
  try {
    const read = await withReceivedFiles(
      request,
      { maxFileBytes: SHEET_FILE_MAX_BYTES, accept: ["csv", "xlsx"], maxFields: 5, maxFieldBytes: 1024 },
      async (got) => ({ name: got.files[0]!.name, ...(await readSheetFile(got.files[0]!)) }),
    );
    return json(read);
  } catch (error) {
    if (error instanceof SheetFileError || error instanceof FileIntakeError) {
      return json({ error: error.message }, { status: error.status });
    }
    throw error;
  }
}

// The upload's heavy steps run in worker threads (workers/pool.server.ts) so the server keeps
// answering meanwhile: reading and validating a file (intake pool, with a time limit) and
// committing rows (writer pool, one transaction). Same results and errors as the functions they
// call; an in-memory database (some tests) keeps the work in this thread.

import type { Db } from "#app/db/client.server.ts";
import type { UploadRowError } from "#app/db/schema.ts";
import { type BatchRow, createUpload } from "#app/models/submission/uploads/batches.server.ts";
import {
  type CommitMode,
  CommitRefused,
  type CommitResult,
  commitUpload,
  submitJsonRows,
} from "#app/models/submission/uploads/commit.server.ts";
import { UploadError } from "#app/models/submission/uploads/read-sheet.server.ts";
import { runTrackedJob } from "#app/models/jobs.server.ts";
import { groupThousands } from "#app/science/calendar.ts";
import { writeWhenFree } from "#app/db/write-when-free.server.ts";
import { databaseFileOf, runInWorker, TaskStopped, WorkerError } from "#app/workers/pool.server.ts";

/** How long reading and checking one uploaded file may take before it is refused. */
export const UPLOAD_READ_TIME_LIMIT_MS = 20_000;

function rethrow(error: unknown): never {
  if (error instanceof WorkerError) {
    if (error.errorName === "CommitRefused") throw new CommitRefused(error.message, error.status);
    if (error.errorName === "UploadError") throw new UploadError(error.message, error.status);
  }
  throw error;
}

export type UploadSummary = {
  publicId: string;
  rows: number;
  validCount: number;
  errors: UploadRowError[];
  warnings: UploadRowError[];
};

/** Reads, maps, validates and stores an uploaded file (see createUpload), off the request thread. */
export async function createUploadOffThread(
  db: Db,
  input: { userId: number; fileName: string; path: string },
): Promise<UploadSummary> {
  const file = databaseFileOf(db);
  if (!file) {
    const { batch, validation } = await createUpload(db, input);
    return {
      publicId: batch.publicId,
      rows: validation.results.length,
      validCount: validation.validCount,
      errors: validation.errors,
      warnings: validation.warnings,
    };
  }
  try {
    return await runInWorker("intake", "createUpload", file, input, { timeoutMs: UPLOAD_READ_TIME_LIMIT_MS });
  } catch (error) {
    if (error instanceof TaskStopped) {
      throw new UploadError(
        error.reason === "time"
          ? `Reading this file took longer than ${UPLOAD_READ_TIME_LIMIT_MS / 1000} s, so it was stopped. Split it into smaller files or save it as CSV.`
          : "Reading this file needed more memory than an upload may use, so it was stopped. Split it into smaller files or save it as CSV.",
      );
    }
    rethrow(error);
  }
}

/** The kind of the job row a commit writes (its progress is shown on the upload's page). */
export const COMMIT_JOB = "upload-commit";

/**
 * Commits a batch (see commitUpload) in the writer thread: one transaction, nothing half-written.
 * A job row records it, with its progress while it runs (rows written, then calibration and
 * checks); `ticket`, chosen by the page, lets the page find that job while it waits.
 */
export async function commitUploadOffThread(
  db: Db,
  batch: BatchRow,
  mode: CommitMode,
  actor: { userId: number },
  options: { ip?: string | null; ticket?: string } = {},
): Promise<CommitResult> {
  const file = databaseFileOf(db);
  if (!file) return commitUpload(db, batch, mode, actor, options);
  return runTrackedJob(
    db,
    {
      kind: COMMIT_JOB,
      total: batch.validCount,
      params: { upload: batch.publicId, mode, ...(options.ticket ? { ticket: options.ticket } : {}) },
      actorId: actor.userId,
    },
    (report) => commitInWriter(db, batch, mode, actor, { ip: options.ip, onProgress: report }),
    (r) => `Committed ${groupThousands(r.committed)} determination${r.committed === 1 ? "" : "s"}.`,
  );
}

/** Validates and writes the API's JSON rows (see submitJsonRows) in the writer thread. */
export async function submitJsonRowsOffThread(
  db: Db,
  items: unknown[],
  actor: { userId: number },
  options: { ip?: string | null } = {},
): Promise<ReturnType<typeof submitJsonRows>> {
  const file = databaseFileOf(db);
  if (!file) return submitJsonRows(db, items, actor, options);
  try {
    return await runInWorker("writer", "submitJsonRows", file, { items, userId: actor.userId, ip: options.ip ?? null });
  } catch (error) {
    rethrow(error);
  }
}

/**
 * Runs a batch's commit in the writer thread (with a time limit when given). A stop by the time
 * limit is reported only when the commit did not happen: the stop can land just after the
 * transaction committed, and then the rows are there and the batch says so, so the result is read
 * back from them.
 */
export async function commitInWriter(
  db: Db,
  batch: BatchRow,
  mode: CommitMode,
  actor: { userId: number },
  options: {
    ip?: string | null;
    onProgress?: (done: number, message?: string) => void;
    timeoutMs?: number;
    pauseAfterCommitMs?: number;
  },
): Promise<CommitResult> {
  const file = databaseFileOf(db);
  if (!file) return commitUpload(db, batch, mode, actor, options);
  try {
    return await runInWorker(
      "writer",
      "commitUpload",
      file,
      { batchId: batch.id, mode, userId: actor.userId, ip: options.ip ?? null, pauseAfterCommitMs: options.pauseAfterCommitMs },
      {
        onProgress: options.onProgress,
        timeoutMs: options.timeoutMs,
        ifStopped: async () => {
          // Once the write lock is free, the stopped thread's transaction has ended, committed or rolled back.
          await writeWhenFree(db, () => undefined);
          return committedResult(db, batch.id);
        },
      },
    );
  } catch (error) {
    rethrow(error);
  }
}

/** What a committed batch's commit answered, read back from the rows and the commit's audit entry; undefined if not committed. */
function committedResult(db: Db, batchId: number): CommitResult | undefined {
  const sqlite = db.$client;
  const batch = sqlite.prepare("select status, public_id as publicId from upload_batches where id = ?").get(batchId) as
    { status: string; publicId: string } | undefined;
  if (batch?.status !== "committed") return undefined;
  const determinationIds = sqlite
    .prepare("select id from determinations where upload_batch_id = ? order by id")
    .pluck()
    .all(batchId) as number[];
  const entry = sqlite
    .prepare(
      "select after from audit_log where action = 'upload.commit' and entity = 'upload_batch' and entity_id = ? order by id desc",
    )
    .pluck()
    .get(batch.publicId) as string | undefined;
  const after = (entry ? JSON.parse(entry) : {}) as { createdSiteIds?: number[]; createdSampleIds?: number[] };
  return {
    committed: determinationIds.length,
    determinationIds,
    createdSiteIds: after.createdSiteIds ?? [],
    createdSampleIds: after.createdSampleIds ?? [],
  };
}

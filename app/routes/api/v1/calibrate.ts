import type { Route } from "./+types/calibrate";
import { clientAddress } from "#app/auth/session.server.ts";
import { getDb } from "#app/db/client.server.ts";
import { parseCalibrationRequest } from "#app/models/calibration/calibrate-items.server.ts";
import {
  calibrationPieces,
  planCalibration,
  stoppedCalibrationMessage,
  tooMuchWorkMessage,
} from "#app/models/calibration/calibrate-work.server.ts";
import { groupThousands } from "#app/science/calendar.ts";
import { CALIBRATE_RATE_LIMIT, CALIBRATE_WORK_BUDGET, MAX_REQUEST_WORK, OFF_THREAD_WORK } from "#app/utils/calibrate-limits.ts";
import { json } from "#app/utils/http.server.ts";
import { hit, spend } from "#app/utils/rate-limit.server.ts";
import { env } from "#app/utils/env.server.ts";
import { databaseFileOf, runInWorker, TaskStopped } from "#app/workers/pool.server.ts";

/*
 * POST /api/v1/calibrate — public, no sign-in. A contract outside scripts rely on: keep the
 * request and response shapes exactly as documented on the API page. The work of a request is
 * counted before it is done (calibrate-work.server.ts): too much for one request is a 413, and
 * each address has a budget of work that refills over a minute (429 with Retry-After). Large
 * requests are calibrated in a worker thread; every answer is written out in pieces.
 */

export { CALIBRATE_RATE_LIMIT, CALIBRATE_WORK_BUDGET };
/** 10,000 items with long ids stay well below this. */
const MAX_BODY_BYTES = 8 * 1024 * 1024;

export async function loader(_: Route.LoaderArgs) {
  // Public endpoint; only POST calibrates.
  return json(
    { error: "Use POST with a JSON body; see /calibrate for the request format." },
    { status: 405, headers: { Allow: "POST" } },
  );
}

export async function action({ request }: Route.ActionArgs) {
  // Public endpoint: the access check is the per-address rate limit (requests, then work).
  try {
    if (request.method !== "POST") {
      return json({ error: "Use POST." }, { status: 405, headers: { Allow: "POST" } });
    }
    const address = clientAddress(request);
    const limited = hit(`api.calibrate:${address}`, CALIBRATE_RATE_LIMIT.limit, CALIBRATE_RATE_LIMIT.windowMs);
    if (!limited.allowed) return tooMany(`Too many requests; try again in ${limited.retryAfterS} s.`, limited.retryAfterS);
    const declared = Number(request.headers.get("Content-Length") ?? 0);
    if (declared > MAX_BODY_BYTES) return tooLarge();
    const text = await request.text();
    if (text.length > MAX_BODY_BYTES) return tooLarge();
    let body: unknown;
    try {
      body = JSON.parse(text);
    } catch {
      return json({ error: "The request body is not valid JSON." }, { status: 400 });
    }
    const parsed = parseCalibrationRequest(body);
    if (!parsed.ok) return json({ error: parsed.error }, { status: 400 });
    const { items, density } = parsed.request;

    const db = getDb();
    const plan = planCalibration(db, items, { density });
    if (plan.problems.length > 0) {
      const n = plan.problems.length;
      return json(
        {
          error: `${n} item${n === 1 ? "" : "s"} cannot be taken: ${plan.problems.map((p) => p.message).join(" ")}`,
          problems: plan.problems,
        },
        { status: 400 },
      );
    }
    if (plan.work > MAX_REQUEST_WORK) {
      return json(
        { error: tooMuchWorkMessage(plan, items.length, density), work: plan.work, limit: MAX_REQUEST_WORK },
        { status: 413 },
      );
    }
    const budget = spend(
      `api.calibrate.work:${address}`,
      plan.work,
      CALIBRATE_WORK_BUDGET.capacity,
      CALIBRATE_WORK_BUDGET.refillMs,
    );
    if (!budget.allowed) {
      return tooMany(
        `Too much calibration from this address: this request counts ${groupThousands(plan.work)} units of work and ` +
          `${groupThousands(budget.used)} of the ${groupThousands(CALIBRATE_WORK_BUDGET.capacity)} allowed per minute are in use; ` +
          `try again in ${budget.retryAfterS} s.`,
        budget.retryAfterS,
      );
    }
    const dbFile = databaseFileOf(db);
    if (plan.work > OFF_THREAD_WORK && dbFile) return await calibrateOffThread(dbFile, items, density);
    return streamed(calibrationPieces(db, items, { density }));
  } catch (error) {
    console.error("POST /api/v1/calibrate failed", error);
    return json({ error: "The calibration could not be completed; please try again." }, { status: 503 });
  }
}

const HEADERS = { "Content-Type": "application/json; charset=utf-8" };

/** An answer written piece by piece as the reader takes it (pull), never as one string. */
function streamed(pieces: Generator<string>): Response {
  const encoder = new TextEncoder();
  const stream = new ReadableStream<Uint8Array>({
    pull(controller) {
      const next = pieces.next();
      if (next.done) controller.close();
      else controller.enqueue(encoder.encode(next.value));
    },
    cancel() {
      pieces.return(undefined);
    },
  });
  return new Response(stream, { status: 200, headers: HEADERS });
}

/**
 * Calibrates in a worker thread; its pieces go out as they arrive. The answer starts once the first
 * piece is there, so a failure before it (time limit, a crash) is still a clean 503.
 */
async function calibrateOffThread(dbFile: string, items: unknown[], density: boolean): Promise<Response> {
  const encoder = new TextEncoder();
  let controller!: ReadableStreamDefaultController<Uint8Array>;
  // Once the reader went away or the task failed, later pieces are dropped.
  let open = true;
  const stream = new ReadableStream<Uint8Array>({
    start: (c) => void (controller = c),
    cancel: () => void (open = false),
  });
  let first!: (failure: unknown) => void;
  const started = new Promise<unknown>((resolve) => (first = resolve));
  const run = runInWorker(
    "intake",
    "calibrate",
    dbFile,
    { items, density },
    {
      timeoutMs: env().WORKER_TIME_LIMIT_MS,
      onPiece: (piece) => {
        if (open) controller.enqueue(encoder.encode(piece));
        first(null);
      },
    },
  );
  run.then(
    () => {
      if (open) controller.close();
      open = false;
      first(null);
    },
    (error: unknown) => {
      console.error("POST /api/v1/calibrate: the worker failed", error);
      if (open) controller.error(error);
      open = false;
      first(error);
    },
  );
  const failure = await started;
  if (failure) return json({ error: stoppedMessage(failure) }, { status: 503 });
  return new Response(stream, { status: 200, headers: HEADERS });
}

/** What a calibration stopped in its thread answers: why, and what to send instead. */
function stoppedMessage(failure: unknown): string {
  if (failure instanceof TaskStopped) return stoppedCalibrationMessage(failure);
  return "The calibration could not be completed; please try again.";
}

function tooMany(message: string, retryAfterS: number) {
  return json({ error: message }, { status: 429, headers: { "Retry-After": String(retryAfterS) } });
}

function tooLarge() {
  return json({ error: `The request body is larger than ${MAX_BODY_BYTES / 1024 / 1024} MB.` }, { status: 413 });
}

import type { Db } from "#app/db/client.server.ts";
import { calibrateItems } from "#app/models/calibration/calibrate-items.server.ts";
import { activeCurve, preparedCurve } from "#app/models/calibration/curves.server.ts";
import { calibrationSpan } from "#app/science/calibration.ts";
import { groupThousands } from "#app/science/calendar.ts";
import type { PreparedCurve } from "#app/science/curve.ts";
import type { ApiResponse } from "#app/utils/calibrate-input.ts";
import { DENSITY_VALUE_COST, ITEM_COST, MAX_REQUEST_WORK, MAX_SIGMA_YR } from "#app/utils/calibrate-limits.ts";
import { env } from "#app/utils/env.server.ts";
import type { TaskStopped } from "#app/workers/pool.server.ts";

/*
 * The work of a calibration request, counted before any of it is done (the limits and what a unit
 * is: utils/calibrate-limits.ts), and its answer written as a stream of JSON pieces.
 */

export type ItemProblem = { index: number; field: string; message: string };

export type CalibrationPlan = {
  /** Units of work (see above). */
  work: number;
  /** Items refused outright (400): each with its index in `determinations` and the field. */
  problems: ItemProblem[];
  /** The costliest items, for the 413's message. */
  costliest: { index: number; span: number }[];
};

/**
 * Counts the work of a request without calibrating anything. Items that will come back with an
 * error in their place (bad numbers, unknown curve, beyond the curve) cost only ITEM_COST.
 */
export function planCalibration(db: Db, items: unknown[], options: { density?: boolean } = {}): CalibrationPlan {
  const curves = new Map<string, PreparedCurve | undefined>();
  const problems: ItemProblem[] = [];
  const spans: { index: number; span: number }[] = [];
  let work = 0;
  items.forEach((raw, index) => {
    work += ITEM_COST;
    for (const field of ["c14_error", "delta_r_error"] as const) {
      const v = typeof raw === "object" && raw !== null ? (raw as Record<string, unknown>)[field] : undefined;
      if (typeof v === "number" && v > MAX_SIGMA_YR) {
        problems.push({
          index,
          field,
          message: `determinations[${index}].${field}: ${groupThousands(Math.round(v))} is more than the ${groupThousands(MAX_SIGMA_YR)} ¹⁴C yr taken here; an age this uncertain spans the whole curve.`,
        });
      }
    }
    const item = numbersOf(raw);
    if (!item) return;
    if (!curves.has(item.curve)) {
      const row = activeCurve(db, item.curve);
      curves.set(item.curve, row ? preparedCurve(db, row.id) : undefined);
    }
    const curve = curves.get(item.curve);
    if (!curve) return;
    const span = calibrationSpan(curve, item);
    work += span * (options.density ? 1 + DENSITY_VALUE_COST : 1);
    if (span > 0) spans.push({ index, span });
  });
  spans.sort((a, b) => b.span - a.span);
  return { work, problems, costliest: spans.slice(0, 3) };
}

/**
 * The numbers that decide an item's work, read without the full schema (this runs for every item
 * of every request, before the work is allowed). Null when the item will come back as an error.
 */
function numbersOf(raw: unknown): { curve: string; age: number; error: number; deltaR?: number; deltaRError?: number } | null {
  if (typeof raw !== "object" || raw === null) return null;
  const r = raw as Record<string, unknown>;
  const num = (v: unknown) => (typeof v === "number" && Number.isFinite(v) ? v : undefined);
  const age = num(r.c14_age);
  const error = num(r.c14_error);
  if (age === undefined || error === undefined) return null;
  const curve = r.curve === undefined ? "intcal20" : typeof r.curve === "string" ? r.curve.trim().toLowerCase() : null;
  if (!curve) return null;
  return { curve, age, error, deltaR: num(r.delta_r), deltaRError: num(r.delta_r_error) };
}

/** The 413's message: how much was asked, the limit, and where the work is. */
export function tooMuchWorkMessage(plan: CalibrationPlan, items: number, density: boolean): string {
  const widest = plan.costliest
    .map((c) => `determinations[${c.index}] spans ${groupThousands(c.span)} calendar years`)
    .join("; ");
  return (
    `This request is too much work for one call: ${groupThousands(plan.work)} units for ${groupThousands(items)} ` +
    `item${items === 1 ? "" : "s"}${density ? " with densities" : ""}; at most ${groupThousands(MAX_REQUEST_WORK)} ` +
    `(an item costs ${groupThousands(ITEM_COST)} plus one per calendar year its age spans on the curve` +
    `${density ? `, and ${DENSITY_VALUE_COST} more per year for its density` : ""}). ` +
    `${widest ? `The widest: ${widest}. ` : ""}Send the items in smaller requests${density ? ", or without densities" : ""}.`
  );
}

/** Results written per piece of the stream. */
const PIECE = 200;

/**
 * The answer of `calibrateItems` as JSON text in pieces, exactly as `JSON.stringify` writes it
 * whole: `{"curves":{…},"results":[…]}`, a few hundred results per piece, so no single string
 * holds a large answer.
 */
export function* responsePieces(response: ApiResponse): Generator<string> {
  yield `{"curves":${JSON.stringify(response.curves)},"results":[`;
  const { results } = response;
  for (let i = 0; i < results.length; i += PIECE) {
    const part = results.slice(i, i + PIECE).map((r) => JSON.stringify(r));
    yield (i > 0 ? "," : "") + part.join(",");
  }
  yield "]}";
}

/** Calibrates and writes the answer in pieces (in whichever thread calls it). */
export function* calibrationPieces(db: Db, items: unknown[], options: { density?: boolean } = {}): Generator<string> {
  yield* responsePieces(calibrateItems(db, items, options));
}

/** A calibration stopped in its thread (time or memory limit): a 503 whose message says what to send instead. */
export class CalibrationStopped extends Error {
  readonly status = 503;
}

/** Why a calibration in a worker thread was stopped, and what to send instead (the API's and the page's words). */
export function stoppedCalibrationMessage(stopped: TaskStopped): string {
  if (stopped.reason === "time") {
    const ms = env().WORKER_TIME_LIMIT_MS;
    const limit = ms >= 1000 ? `${Math.round(ms / 1000)} s` : `${ms} ms`;
    return `The calibration took longer than ${limit}, so it was stopped; send fewer dates at a time.`;
  }
  if (stopped.reason === "memory") {
    return "The calibration needed more memory than one request may use, so it was stopped; send fewer dates at a time.";
  }
  return "The calibration could not be completed; please try again.";
}

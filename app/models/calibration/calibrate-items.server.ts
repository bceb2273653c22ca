import { z } from "zod";
import type { Db } from "#app/db/client.server.ts";
import { calendarOutcome, radiocarbonAgeFields } from "#app/models/calibration/calibrations.server.ts";
import { activeCurve, type CurveRow } from "#app/models/calibration/curves.server.ts";
import type { CalendarDensity, Range } from "#app/science/density.ts";
import {
  MAX_CALIBRATION_ITEMS,
  type ApiDensity,
  type ApiRange,
  type ApiResponse,
  type ApiResult,
} from "#app/utils/calibrate-input.ts";

/*
 * Calibration of ages that are not in the registry: the public API and the calibration page.
 * Nothing is stored; each item is validated on its own so one bad item never spoils the rest.
 */

const finite = (what: string) =>
  z
    .number({ error: (iss) => (iss.input === undefined ? `${what} is required.` : `${what} must be a number.`) })
    .refine(Number.isFinite, `${what} must be a finite number.`);

export const calibrationItemSchema = z.object(
  {
    id: z
      .union([z.string().max(200, "id must be at most 200 characters."), z.number()], {
        error: "id must be a string or a number.",
      })
      .optional(),
    c14_age: finite("c14_age"),
    c14_error: finite("c14_error").refine((v) => v > 0, "c14_error must be positive."),
    curve: z
      .string({ error: "curve must be a curve name such as intcal20 or marine20." })
      .trim()
      .min(1, "curve must be a curve name such as intcal20 or marine20.")
      .max(64)
      .default("intcal20"),
    delta_r: finite("delta_r").optional(),
    delta_r_error: finite("delta_r_error")
      .refine((v) => v >= 0, "delta_r_error must be zero or more.")
      .optional(),
  },
  { error: 'Each determination must be an object such as {"id":"a1","c14_age":10250,"c14_error":45}.' },
);

export type CalibrationRequest = { items: unknown[]; density: boolean };

/** Checks the envelope of a request (not its items). Returns a message for a 400 when it is malformed. */
export function parseCalibrationRequest(body: unknown): { ok: true; request: CalibrationRequest } | { ok: false; error: string } {
  if (typeof body !== "object" || body === null || Array.isArray(body)) {
    return { ok: false, error: 'The request body must be a JSON object with a "determinations" array.' };
  }
  const { determinations, density } = body as Record<string, unknown>;
  if (!Array.isArray(determinations)) {
    return { ok: false, error: 'The request needs a "determinations" array.' };
  }
  if (determinations.length > MAX_CALIBRATION_ITEMS) {
    return {
      ok: false,
      error: `Too many determinations: ${determinations.length}; at most ${MAX_CALIBRATION_ITEMS.toLocaleString("en")} per request.`,
    };
  }
  if (density !== undefined && typeof density !== "boolean") {
    return { ok: false, error: '"density" must be true or false.' };
  }
  return { ok: true, request: { items: determinations, density: density === true } };
}

function describeIssues(error: z.ZodError): string {
  return error.issues.map((i) => i.message).join(" ");
}

const round3 = (p: number) => Math.round(p * 1000) / 1000;

function ranges(list: Range[]): ApiRange[] {
  // The science returns ranges from oldest with from ≥ to; kept as given, p rounded for the wire.
  return list.map((r) => ({ from: r.from, to: r.to, p: round3(r.p) }));
}

function densityForWire(d: CalendarDensity): ApiDensity {
  const values = new Array<number>(d.values.length);
  for (let i = 0; i < d.values.length; i++) values[i] = Number(d.values[i]!.toPrecision(6));
  return { start_cal_bp: d.startCalBp, step: 1, values };
}

function echoId(raw: unknown, position: number): string | number {
  if (typeof raw === "object" && raw !== null && "id" in raw) {
    const id = (raw as { id: unknown }).id;
    if ((typeof id === "string" && id.length <= 200) || (typeof id === "number" && Number.isFinite(id))) return id;
  }
  return String(position + 1);
}

/**
 * Calibrates each item on the active version of its named curve. Items that fail (bad numbers,
 * unknown curve, age beyond the curve) get `{ id, error }` in their place. `curves` lists only the
 * curves at least one item was calibrated on.
 */
export function calibrateItems(db: Db, items: unknown[], options: { density?: boolean } = {}): ApiResponse {
  const curveCache = new Map<string, CurveRow | undefined>();
  const curveFor = (name: string) => {
    if (!curveCache.has(name)) curveCache.set(name, activeCurve(db, name));
    return curveCache.get(name);
  };
  const used = new Map<string, CurveRow>();
  const results: ApiResult[] = items.map((raw, position) => {
    const id = echoId(raw, position);
    const parsed = calibrationItemSchema.safeParse(raw);
    if (!parsed.success) return { id, error: describeIssues(parsed.error) };
    const item = parsed.data;
    const name = item.curve.toLowerCase();
    const curve = curveFor(name);
    if (!curve)
      return { id, error: `Unknown curve "${item.curve}". Use one of the curves listed on /curves, e.g. intcal20 or marine20.` };
    if (curve.kind !== "marine" && ((item.delta_r ?? 0) !== 0 || (item.delta_r_error ?? 0) !== 0)) {
      return { id, error: `delta_r applies to marine curves only; ${curve.displayName} is ${curve.kind}.` };
    }
    const outcome = calendarOutcome(db, radiocarbonAgeFields(item, name), curveFor);
    if (!outcome.ok) return { id, error: outcome.error };
    used.set(name, curve);
    const s = outcome.summary;
    const result: ApiResult = {
      id,
      median_cal_bp: Math.round(s.medianCalBp),
      hpd68: ranges(s.hpd68),
      hpd95: ranges(s.hpd95),
    };
    if (options.density) result.density = densityForWire(outcome.density);
    return result;
  });
  const curves: ApiResponse["curves"] = {};
  for (const [name, c] of used) {
    curves[name] = { version: c.version, citation: c.doi ? `${c.citation} doi:${c.doi}` : c.citation };
  }
  return { curves, results };
}

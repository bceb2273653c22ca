// Limits of the public calibration API (POST /api/v1/calibrate), documented on the API page.
// Client-safe constants; the counting is in models/calibration/calibrate-work.server.ts.
//
// The work of one item is the calendar span its likelihood is computed over (what the
// calibration loops over) plus a fixed cost; a density costs again for every value it puts in
// the answer. Measured on this machine (2 shared cores): about 20–25 ns of CPU per unit, so the
// largest request is about a second of one core.

/** Fixed cost of one item (validation, curve look-up, summary), in units of one calendar year. */
export const ITEM_COST = 2_000;
/** Each density value in the answer costs this many units (rounding and writing it out). */
export const DENSITY_VALUE_COST = 25;
/** The most work one request may ask for: 10,000 typical dates (σ 30–100 yr) fit; so do ~1,500 with densities. */
export const MAX_REQUEST_WORK = 50_000_000;
/** Work above this runs in a worker thread, never on the thread that serves other requests. */
export const OFF_THREAD_WORK = 2_000_000;
/** The largest 1σ (of the age, or of ΔR) taken: an age this uncertain already spans the whole curve. */
export const MAX_SIGMA_YR = 5_000;
/** Requests per client address per window (every request counts, however small). */
export const CALIBRATE_RATE_LIMIT = { limit: 60, windowMs: 60_000 } as const;
/** Work per client address: four of the largest requests a minute, refilling steadily. */
export const CALIBRATE_WORK_BUDGET = { capacity: 4 * MAX_REQUEST_WORK, refillMs: 60_000 } as const;

// Calibration curves: parsing the shared CSV layout, validating an import, and preparing a
// 1-year calendar grid with a coarse block index so calibration can skip empty regions.

export interface Curve {
  name: string;
  /** Calendar ages (cal BP), strictly ascending. */
  calBp: Float64Array;
  /** 14C age (yr BP) at each calendar age. */
  c14: Float64Array;
  /** 1σ of the 14C age at each calendar age. */
  sigma: Float64Array;
}

/** A curve from rows of [cal BP, 14C age, 1σ] (further entries of a row are ignored), in their order. */
export function curveFromRows(name: string, rows: readonly (readonly number[])[]): Curve {
  const n = rows.length;
  const curve: Curve = {
    name,
    calBp: new Float64Array(n),
    c14: new Float64Array(n),
    sigma: new Float64Array(n),
  };
  for (let i = 0; i < n; i++) {
    curve.calBp[i] = rows[i][0];
    curve.c14[i] = rows[i][1];
    curve.sigma[i] = rows[i][2];
  }
  return curve;
}

export interface CurveIssue {
  /** 1-based line in the CSV text (header is line 1); absent for whole-curve issues. */
  line?: number;
  message: string;
}

export type CurveParseResult = { ok: true; curve: Curve; issues: CurveIssue[] } | { ok: false; issues: CurveIssue[] };

export interface CurveValidationOptions {
  /** Largest allowed gap between consecutive calendar ages, in years. */
  maxStep?: number;
}

/** The shared files step by at most 20 years; a larger gap suggests missing rows. */
export const DEFAULT_MAX_STEP = 20;

const REQUIRED_COLUMNS = ["cal_bp", "c14_age", "c14_sigma"] as const;

function splitCsvLine(line: string): string[] {
  return line.split(",").map((cell) =>
    cell
      .trim()
      .replace(/^"(.*)"$/, "$1")
      .trim(),
  );
}

/**
 * Parses CSV text in the shared curve layout (header naming cal_bp, c14_age, c14_sigma; other
 * columns ignored). Rows may come in any order; they are sorted ascending by cal BP. Every
 * problem is reported with its line so an editor can fix the file, and nothing is returned
 * as a curve unless the whole file is valid.
 */
export function parseCurveCsv(text: string, name: string, options: CurveValidationOptions = {}): CurveParseResult {
  const issues: CurveIssue[] = [];
  const lines = text.replace(/^\uFEFF/, "").split(/\r\n|\n|\r/);
  const headerIndex = lines.findIndex((l) => l.trim() !== "");
  if (headerIndex < 0) return { ok: false, issues: [{ message: "The file is empty." }] };
  const header = splitCsvLine(lines[headerIndex]).map((h) => h.toLowerCase());
  const idx: Record<string, number> = {};
  for (const col of REQUIRED_COLUMNS) {
    idx[col] = header.indexOf(col);
    if (idx[col] < 0) issues.push({ line: headerIndex + 1, message: `The header has no "${col}" column.` });
  }
  if (issues.length) return { ok: false, issues };

  const rows: [number, number, number, number][] = [];
  for (let i = headerIndex + 1; i < lines.length; i++) {
    const raw = lines[i];
    if (raw.trim() === "") continue;
    const cells = splitCsvLine(raw);
    const values: number[] = [];
    let bad = false;
    for (const col of REQUIRED_COLUMNS) {
      const cell = cells[idx[col]];
      const v = cell === undefined || cell === "" ? Number.NaN : Number(cell);
      if (!Number.isFinite(v)) {
        issues.push({
          line: i + 1,
          message: `Column ${col} is ${cell === undefined || cell === "" ? "empty" : `not a number ("${cell}")`}.`,
        });
        bad = true;
      }
      values.push(v);
    }
    if (!bad) rows.push([values[0], values[1], values[2], i + 1]);
  }
  if (rows.length < 2 && issues.length === 0) {
    issues.push({ message: "The curve needs at least two rows." });
  }
  if (issues.length) return { ok: false, issues };

  rows.sort((a, b) => a[0] - b[0]);
  const curve = curveFromRows(name, rows);
  const lineOf = (i: number) => rows[i][3];
  const validation = validateCurve(curve, options, lineOf);
  if (validation.length) return { ok: false, issues: validation };
  return { ok: true, curve, issues: [] };
}

/**
 * Checks a curve's internal consistency. `lineOf` maps a row index to its source line when
 * the curve came from a file.
 */
export function validateCurve(
  curve: Curve,
  options: CurveValidationOptions = {},
  lineOf?: (rowIndex: number) => number,
): CurveIssue[] {
  const maxStep = options.maxStep ?? DEFAULT_MAX_STEP;
  const issues: CurveIssue[] = [];
  const { calBp, c14, sigma } = curve;
  const at = (i: number) => (lineOf ? { line: lineOf(i) } : {});
  if (calBp.length !== c14.length || calBp.length !== sigma.length) {
    return [{ message: "The curve's columns have different lengths." }];
  }
  if (calBp.length < 2) return [{ message: "The curve needs at least two rows." }];
  for (let i = 0; i < calBp.length; i++) {
    if (!Number.isFinite(calBp[i]) || !Number.isFinite(c14[i]) || !Number.isFinite(sigma[i])) {
      issues.push({ ...at(i), message: `Row ${i + 1} has a value that is not a finite number.` });
      continue;
    }
    if (!(sigma[i] > 0)) {
      issues.push({ ...at(i), message: `The ¹⁴C error at ${calBp[i]} cal BP is ${sigma[i]}; it must be positive.` });
    }
    if (i > 0) {
      const step = calBp[i] - calBp[i - 1];
      if (step === 0) {
        issues.push({ ...at(i), message: `Calendar age ${calBp[i]} cal BP appears more than once.` });
      } else if (step < 0) {
        issues.push({ ...at(i), message: `Calendar ages are not ascending at ${calBp[i]} cal BP.` });
      } else if (step > maxStep) {
        issues.push({
          ...at(i),
          message: `Gap of ${step} years between ${calBp[i - 1]} and ${calBp[i]} cal BP exceeds the maximum step of ${maxStep} years.`,
        });
      }
    }
  }
  return issues;
}

export interface SpotValue {
  calBp: number;
  c14: number;
  sigma: number;
}

/** Published rows quoted in shared/curves/README.md, for checking an import. */
export const SPOT_VALUES: Readonly<Record<"intcal20" | "marine20", readonly SpotValue[]>> = {
  intcal20: [
    { calBp: 0, c14: 199, sigma: 11 },
    { calBp: 1000, c14: 1126, sigma: 13 },
    { calBp: 5000, c14: 4439, sigma: 15 },
    { calBp: 10000, c14: 8872, sigma: 21 },
    { calBp: 20000, c14: 16566, sigma: 45 },
  ],
  marine20: [
    { calBp: 0, c14: 603.22, sigma: 59.66 },
    { calBp: 10000, c14: 9339.97, sigma: 59.18 },
    { calBp: 20000, c14: 17304.05, sigma: 91.93 },
  ],
};

/** Returns one message per spot value the curve does not reproduce (empty when all match). */
export function checkSpotValues(curve: Curve, name: keyof typeof SPOT_VALUES, tolerance = 1e-6): string[] {
  const failures: string[] = [];
  for (const spot of SPOT_VALUES[name]) {
    const i = findRow(curve, spot.calBp);
    if (i < 0) {
      failures.push(`${name}: no row at ${spot.calBp} cal BP.`);
      continue;
    }
    if (Math.abs(curve.c14[i] - spot.c14) > tolerance || Math.abs(curve.sigma[i] - spot.sigma) > tolerance) {
      failures.push(
        `${name} at ${spot.calBp} cal BP: expected ${spot.c14} ± ${spot.sigma}, found ${curve.c14[i]} ± ${curve.sigma[i]}.`,
      );
    }
  }
  return failures;
}

/** Index of the row with exactly this calendar age, or −1. */
export function findRow(curve: Curve, calBp: number): number {
  let lo = 0;
  let hi = curve.calBp.length - 1;
  while (lo <= hi) {
    const mid = (lo + hi) >> 1;
    const v = curve.calBp[mid];
    if (v === calBp) return mid;
    if (v < calBp) lo = mid + 1;
    else hi = mid - 1;
  }
  return -1;
}

/**
 * Curve value at any calendar age inside its range, interpolating linearly between rows
 * (both the 14C age and its σ). Returns null outside the range.
 */
export function interpolateCurve(curve: Curve, calBp: number): { c14: number; sigma: number } | null {
  const x = curve.calBp;
  const n = x.length;
  if (!(calBp >= x[0] && calBp <= x[n - 1])) return null;
  let lo = 0;
  let hi = n - 1;
  while (hi - lo > 1) {
    const mid = (lo + hi) >> 1;
    if (x[mid] <= calBp) lo = mid;
    else hi = mid;
  }
  if (x[lo] === calBp) return { c14: curve.c14[lo], sigma: curve.sigma[lo] };
  const t = (calBp - x[lo]) / (x[hi] - x[lo]);
  return {
    c14: curve.c14[lo] + t * (curve.c14[hi] - curve.c14[lo]),
    sigma: curve.sigma[lo] + t * (curve.sigma[hi] - curve.sigma[lo]),
  };
}

export interface PreparedCurve {
  name: string;
  /** Calendar age of grid index 0 (the youngest grid year). */
  startCalBp: number;
  /** Number of 1-year grid points. */
  length: number;
  /** Curve 14C age on the grid. */
  c: Float64Array;
  /** Curve variance s² on the grid (squared once here rather than per date). */
  s2: Float64Array;
  blockSize: number;
  /** Per block of `blockSize` grid years: min and max of c, max of s². */
  blockMinC: Float64Array;
  blockMaxC: Float64Array;
  blockMaxS2: Float64Array;
  /** The same over groups of SUPER_BLOCK blocks, so a date skips most blocks in one test. */
  superMinC: Float64Array;
  superMaxC: Float64Array;
  superMaxS2: Float64Array;
  /** Range of the curve's 14C ages, for "beyond the curve" messages. */
  minC14: number;
  maxC14: number;
  /** The curve's own 1σ where it reaches minC14 and maxC14. */
  minC14Sigma: number;
  maxC14Sigma: number;
}

/** Blocks per super-block in the two-level index. */
export const SUPER_BLOCK = 16;

export interface PrepareOptions {
  blockSize?: number;
}

/**
 * Builds the 1-year grid once per curve; callers keep the result and reuse it for every date.
 * A marine ΔR is deliberately not baked in: calibration compares μ − ΔR with the base curve,
 * so one prepared Marine20 serves every region.
 */
export function prepareCurve(curve: Curve, options: PrepareOptions = {}): PreparedCurve {
  const blockSize = options.blockSize ?? 64;
  const x = curve.calBp;
  const n = x.length;
  const start = Math.ceil(x[0]);
  const end = Math.floor(x[n - 1]);
  const length = end - start + 1;
  const c = new Float64Array(length);
  const s2 = new Float64Array(length);
  let row = 0;
  for (let g = 0; g < length; g++) {
    const theta = start + g;
    while (row < n - 2 && x[row + 1] <= theta) row++;
    const x0 = x[row];
    const x1 = x[row + 1];
    const t = (theta - x0) / (x1 - x0);
    const ci = curve.c14[row] + t * (curve.c14[row + 1] - curve.c14[row]);
    const si = curve.sigma[row] + t * (curve.sigma[row + 1] - curve.sigma[row]);
    c[g] = ci;
    s2[g] = si * si;
  }
  const nBlocks = Math.ceil(length / blockSize);
  const blockMinC = new Float64Array(nBlocks);
  const blockMaxC = new Float64Array(nBlocks);
  const blockMaxS2 = new Float64Array(nBlocks);
  let minC14 = Infinity;
  let maxC14 = -Infinity;
  for (let b = 0; b < nBlocks; b++) {
    let lo = Infinity;
    let hi = -Infinity;
    let sMax = 0;
    const gEnd = Math.min(length, (b + 1) * blockSize);
    for (let g = b * blockSize; g < gEnd; g++) {
      if (c[g] < lo) lo = c[g];
      if (c[g] > hi) hi = c[g];
      if (s2[g] > sMax) sMax = s2[g];
    }
    blockMinC[b] = lo;
    blockMaxC[b] = hi;
    blockMaxS2[b] = sMax;
    if (lo < minC14) minC14 = lo;
    if (hi > maxC14) maxC14 = hi;
  }
  const nSuper = Math.ceil(nBlocks / SUPER_BLOCK);
  const superMinC = new Float64Array(nSuper).fill(Infinity);
  const superMaxC = new Float64Array(nSuper).fill(-Infinity);
  const superMaxS2 = new Float64Array(nSuper);
  for (let b = 0; b < nBlocks; b++) {
    const k = Math.floor(b / SUPER_BLOCK);
    superMinC[k] = Math.min(superMinC[k], blockMinC[b]);
    superMaxC[k] = Math.max(superMaxC[k], blockMaxC[b]);
    superMaxS2[k] = Math.max(superMaxS2[k], blockMaxS2[b]);
  }
  return {
    name: curve.name,
    startCalBp: start,
    length,
    c,
    s2,
    blockSize,
    blockMinC,
    blockMaxC,
    blockMaxS2,
    superMinC,
    superMaxC,
    superMaxS2,
    minC14,
    maxC14,
    minC14Sigma: Math.sqrt(s2[argExtreme(c, -1)]),
    maxC14Sigma: Math.sqrt(s2[argExtreme(c, 1)]),
  };
}

function argExtreme(c: Float64Array, sign: 1 | -1): number {
  let best = 0;
  for (let g = 1; g < c.length; g++) if (sign * (c[g] - c[best]) > 0) best = g;
  return best;
}

/**
 * Curve value at a grid year with an optional reservoir offset applied (c + ΔR, s and σ_ΔR
 * in quadrature). Useful for plots and for simulating measurements from a true age.
 */
export function preparedCurveAt(
  prepared: PreparedCurve,
  calBp: number,
  offset: { deltaR?: number; deltaRError?: number } = {},
): { c14: number; sigma: number } | null {
  const g = Math.round(calBp) - prepared.startCalBp;
  if (g < 0 || g >= prepared.length) return null;
  const dr = offset.deltaR ?? 0;
  const drs = offset.deltaRError ?? 0;
  return { c14: prepared.c[g] + dr, sigma: Math.sqrt(prepared.s2[g] + drs * drs) };
}

import crypto from "node:crypto";
import fs from "node:fs";
import path from "node:path";
import { and, asc, eq } from "drizzle-orm";
import type { Db } from "#app/db/client.server.ts";
import { curves } from "#app/db/schema.ts";
import {
  checkSpotValues,
  curveFromRows,
  parseCurveCsv,
  prepareCurve,
  SPOT_VALUES,
  type Curve,
  type CurveIssue,
  type PreparedCurve,
} from "#app/science/curve.ts";
import { env } from "#app/utils/env.server.ts";

export type CurveMeta = {
  name: string;
  displayName: string;
  kind: "atmospheric" | "marine";
  version: string;
  citation: string;
  doi?: string;
  maxStep?: number;
};

/** The curves shipped with Thawline, read from CURVES_DIR at set-up. */
export const BUNDLED_CURVES: (CurveMeta & { file: string })[] = [
  {
    file: "intcal20.csv",
    name: "intcal20",
    displayName: "IntCal20",
    kind: "atmospheric",
    version: "2020",
    citation:
      "Reimer, P. J. et al. (2020) The IntCal20 Northern Hemisphere radiocarbon age calibration curve (0–55 cal kBP). Radiocarbon 62(4), 725–757.",
    doi: "10.1017/RDC.2020.41",
  },
  {
    file: "marine20.csv",
    name: "marine20",
    displayName: "Marine20",
    kind: "marine",
    version: "2020",
    citation:
      "Heaton, T. J. et al. (2020) Marine20 — the marine radiocarbon age calibration curve (0–55,000 cal BP). Radiocarbon 62(4), 779–820.",
    doi: "10.1017/RDC.2020.68",
  },
];

export class CurveImportError extends Error {
  constructor(
    message: string,
    public issues: CurveIssue[] = [],
  ) {
    super(message);
  }
}

export type ImportResult = { curveId: number; created: boolean };

/**
 * Validates and stores one curve in a single transaction. Importing the same file again is a
 * no-op; a different file under an existing name and version is refused.
 */
export function importCurve(db: Db, meta: CurveMeta, csvText: string, createdBy?: number): ImportResult {
  const checksum = crypto.createHash("sha256").update(csvText).digest("hex");
  const existing = db
    .select()
    .from(curves)
    .where(and(eq(curves.name, meta.name), eq(curves.version, meta.version)))
    .get();
  if (existing) {
    if (existing.checksum === checksum) return { curveId: existing.id, created: false };
    throw new CurveImportError(
      `A different file is already stored as ${meta.displayName} version ${meta.version}; give the new one another version.`,
    );
  }
  const parsed = parseCurveCsv(csvText, meta.name, { maxStep: meta.maxStep });
  if (!parsed.ok) {
    const first = parsed.issues.slice(0, 5).map((i) => (i.line ? `line ${i.line}: ${i.message}` : i.message));
    throw new CurveImportError(`The ${meta.displayName} file is not a valid curve: ${first.join("; ")}`, parsed.issues);
  }
  const curve = parsed.curve;
  if (meta.name in SPOT_VALUES) {
    const failures = checkSpotValues(curve, meta.name as keyof typeof SPOT_VALUES);
    if (failures.length) {
      throw new CurveImportError(
        `The file claims to be ${meta.displayName} but does not match its published values: ${failures.join(" ")}`,
        failures.map((message) => ({ message })),
      );
    }
  }
  return db.transaction((tx) => {
    const row = tx
      .insert(curves)
      .values({
        name: meta.name,
        displayName: meta.displayName,
        kind: meta.kind,
        version: meta.version,
        citation: meta.citation,
        doi: meta.doi ?? null,
        calMinBp: Math.round(curve.calBp[0]),
        calMaxBp: Math.round(curve.calBp[curve.calBp.length - 1]),
        rowCount: curve.calBp.length,
        checksum,
        active: true,
        createdBy: createdBy ?? null,
      })
      .returning({ id: curves.id })
      .get();
    const insert = db.$client.prepare(
      "insert into curve_points (curve_id, cal_bp, c14_age_yr, c14_sigma_yr) values (?, ?, ?, ?)",
    );
    for (let i = 0; i < curve.calBp.length; i++) {
      insert.run(row.id, curve.calBp[i], curve.c14[i], curve.sigma[i]);
    }
    return { curveId: row.id, created: true };
  });
}

/** Imports IntCal20 and Marine20 from CURVES_DIR (idempotent). */
export async function importBundledCurves(db: Db, dir = env().CURVES_DIR): Promise<ImportResult[]> {
  const results: ImportResult[] = [];
  for (const meta of BUNDLED_CURVES) {
    const file = path.join(dir, meta.file);
    if (!fs.existsSync(file)) {
      throw new CurveImportError(`Curve file not found: ${file}. Set CURVES_DIR to the folder holding ${meta.file}.`);
    }
    results.push(importCurve(db, meta, fs.readFileSync(file, "utf8")));
  }
  return results;
}

export type CurveRow = typeof curves.$inferSelect;

export function listCurves(db: Db): CurveRow[] {
  return db.select().from(curves).orderBy(asc(curves.name), asc(curves.createdAt)).all();
}

/** The active version of a curve by short name (the newest active one when several are). */
export function activeCurve(db: Db, name: string): CurveRow | undefined {
  return db
    .select()
    .from(curves)
    .where(and(eq(curves.name, name.toLowerCase()), eq(curves.active, true)))
    .orderBy(asc(curves.createdAt))
    .all()
    .at(-1);
}

export function loadCurve(db: Db, curveId: number): Curve {
  const rows = db.$client
    .prepare("select cal_bp, c14_age_yr, c14_sigma_yr from curve_points where curve_id = ? order by cal_bp")
    .raw()
    .all(curveId) as [number, number, number][];
  return curveFromRows(String(curveId), rows);
}

// Prepared grids are immutable once built (a curve version never changes), so one per imported
// file serves the whole process. Keyed by the file's SHA-256 rather than the row id, so databases
// that share a curve (tests' per-test copies) share its grid and a reused id never finds another's.
const preparedCache = new Map<string, PreparedCurve>();

export function preparedCurve(db: Db, curveId: number): PreparedCurve {
  const row = db.$client.prepare("select checksum from curves where id = ?").get(curveId) as { checksum: string } | undefined;
  const key = row ? row.checksum : `${db.$client.name}#${curveId}`;
  let prepared = preparedCache.get(key);
  if (!prepared) {
    prepared = prepareCurve(loadCurve(db, curveId));
    preparedCache.set(key, prepared);
  }
  return prepared;
}

export type CurveWindowPoint = { calBp: number; c14: number; sigma: number };

/** Most points a plot needs: more than one per pixel of a page-wide chart buys nothing. */
export const CURVE_WINDOW_MAX_POINTS = 400;

/**
 * Curve rows covering a calendar window (ascending cal BP), including the nearest row beyond
 * each end so a band drawn from them spans the whole window; thinned evenly to at most
 * `maxPoints` rows (first and last kept).
 */
export function curveWindow(
  db: Db,
  curveId: number,
  fromCalBp: number,
  toCalBp: number,
  maxPoints = CURVE_WINDOW_MAX_POINTS,
): CurveWindowPoint[] {
  const lo = Math.min(fromCalBp, toCalBp);
  const hi = Math.max(fromCalBp, toCalBp);
  const rows = db.$client
    .prepare(
      `select cal_bp, c14_age_yr, c14_sigma_yr from curve_points
       where curve_id = @id
         and cal_bp >= coalesce((select max(cal_bp) from curve_points where curve_id = @id and cal_bp <= @lo), @lo)
         and cal_bp <= coalesce((select min(cal_bp) from curve_points where curve_id = @id and cal_bp >= @hi), @hi)
       order by cal_bp`,
    )
    .raw()
    .all({ id: curveId, lo, hi }) as [number, number, number][];
  const n = rows.length;
  const take = (r: [number, number, number]): CurveWindowPoint => ({ calBp: r[0], c14: r[1], sigma: r[2] });
  if (n <= maxPoints) return rows.map(take);
  const out: CurveWindowPoint[] = [];
  const stride = (n - 1) / (maxPoints - 1);
  for (let k = 0; k < maxPoints; k++) out.push(take(rows[Math.round(k * stride)]!));
  return out;
}

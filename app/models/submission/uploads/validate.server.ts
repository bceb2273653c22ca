// Every row of a file checked against the registry (labs, sites, samples, curves) and the row schema,
// with the registry read once per file, and the preview of what a commit would create.

import { inArray, sql } from "drizzle-orm";
import { env } from "#app/utils/env.server.ts";
import type { Db } from "#app/db/client.server.ts";
import { determinations, labs, materials, samples, sites, type UploadRowError } from "#app/db/schema.ts";
import { calibrationInputFor, interpretMeasurement } from "#app/models/calibration/calibrations.server.ts";
import { activeCurve, listCurves, preparedCurve, type CurveRow } from "#app/models/calibration/curves.server.ts";
import { beyondCurve } from "#app/science/calibration.ts";
import { measurementFields } from "#app/models/submission/determinations.server.ts";
import { luminescenceAge } from "#app/science/luminescence.ts";
import { checkRow } from "#app/utils/determination-input/check-row.ts";
import { columnSpec } from "#app/utils/determination-input/columns.ts";
import type { DeterminationRow, RowContext, RowIssue } from "#app/utils/determination-input/row.ts";
import { isBlankCell } from "#app/utils/determination-input/cells.ts";
import type { ColumnMapping } from "#app/models/submission/uploads/mapping.server.ts";
import type { StoredCell, StoredRow } from "#app/models/submission/uploads/read-sheet.server.ts";

export type RowResult = { n: number; value?: DeterminationRow; issues: RowIssue[]; warnings: RowIssue[] };

export type UploadPreview = {
  newSites: number;
  existingSites: number;
  newSamples: number;
  existingSamples: number;
  determinations: number;
  newLabs: string[];
  byMethod: Record<string, number>;
};

export type Validation = {
  results: RowResult[];
  errors: UploadRowError[];
  warnings: UploadRowError[];
  validCount: number;
  preview: UploadPreview;
  notices: string[];
};

export type Registry = {
  ctx: RowContext;
  labs: { id: number; name: string; codePrefix: string }[];
  curveFor: (name: string) => CurveRow | undefined;
};

/** What validation needs from the registry, read once per file (no query per row). */
function loadRegistry(db: Db, labCodes: string[]): Registry {
  const mats = db.select().from(materials).all();
  const curveRows = listCurves(db).filter((c) => c.active);
  const curveNames = [...new Set(curveRows.map((c) => c.name))];
  const existing = new Map<string, number>();
  const lower = [...new Set(labCodes.map((c) => c.toLowerCase()))];
  for (let i = 0; i < lower.length; i += 500) {
    const chunk = lower.slice(i, i + 500);
    const rows = db
      .select({ id: determinations.id, labCode: determinations.labCode })
      .from(determinations)
      .where(inArray(sql`lower(${determinations.labCode})`, chunk))
      .all();
    for (const r of rows) existing.set(r.labCode.toLowerCase(), r.id);
  }
  const curveCache = new Map<string, CurveRow | undefined>();
  const curveFor = (name: string) => {
    if (!curveCache.has(name)) curveCache.set(name, activeCurve(db, name));
    return curveCache.get(name);
  };
  const ctx: RowContext = {
    materials: mats.map((m) => m.name),
    curves: curveNames,
    marineMaterials: mats.filter((m) => m.marine).map((m) => m.name),
    marineCurves: [...new Set(curveRows.filter((c) => c.kind === "marine").map((c) => c.name))],
    materialMethods: Object.fromEntries(mats.map((m) => [m.name.toLowerCase(), m.methods.split(",").map((s) => s.trim())])),
    labCodeInRegistry: (code) => existing.get(code.toLowerCase()) ?? null,
    regionOfInterest: env().REGION_OF_INTEREST,
    calendarProblem: (row) => calendarProblem(db, row, curveFor),
  };
  const labRows = db.select({ id: labs.id, name: labs.name, codePrefix: labs.codePrefix }).from(labs).all();
  return { ctx, labs: labRows, curveFor };
}

/**
 * Can the registry give this row a calendar age? Limits and post-bomb ages are stored without
 * one (the checks report them); anything else that would fail at calibration — above all an age
 * beyond the curve — is a row error. Radiocarbon rows get the test `calibrate` itself applies
 * (beyondCurve, with the same input calibrate gets) and luminescence rows the age formula, without building a calendar
 * density (calendarOutcome would, and that dominated the time of a 5,500-row file).
 */
function calendarProblem(db: Db, row: DeterminationRow, curveFor: (n: string) => CurveRow | undefined): RowIssue | null {
  const fields = measurementFields(row);
  if (row.method === "radiocarbon") {
    const ageColumn = row.c14_age != null ? "c14_age" : "f14c";
    const interpreted = interpretMeasurement(fields);
    if (interpreted.kind === "invalid") return { column: ageColumn, message: interpreted.message };
    if (interpreted.kind !== "age") return null;
    const curve = curveFor(fields.curveName ?? "intcal20");
    if (!curve) return { column: "curve", message: `No active curve named "${fields.curveName}".` };
    const refusal = beyondCurve(preparedCurve(db, curve.id), calibrationInputFor(curve, fields, interpreted));
    if (refusal) return { column: ageColumn, message: refusal };
    return null;
  }
  if (fields.deGy == null || fields.doseRateGyPerKa == null) return null;
  try {
    luminescenceAge(
      { value: fields.deGy, error: fields.deErrorGy ?? 0 },
      { value: fields.doseRateGyPerKa, error: fields.doseRateErrorGyPerKa ?? 0 },
    );
  } catch (e) {
    return { column: "de_gy", message: e instanceof Error ? e.message : String(e) };
  }
  return null;
}

const SITE_MATCH_M = 100;

function distanceM(lat1: number, lon1: number, lat2: number, lon2: number): number {
  const rad = Math.PI / 180;
  const x = (lon2 - lon1) * rad * Math.cos(((lat1 + lat2) / 2) * rad);
  const y = (lat2 - lat1) * rad;
  return Math.hypot(x, y) * 6_371_000;
}

export type SiteRef = { id: number; name: string; latitude: number; longitude: number };

export function loadSitesByName(db: Db, names: string[]): Map<string, SiteRef[]> {
  const out = new Map<string, SiteRef[]>();
  const unique = [...new Set(names)];
  for (let i = 0; i < unique.length; i += 500) {
    const rows = db
      .select({ id: sites.id, name: sites.name, latitude: sites.latitude, longitude: sites.longitude })
      .from(sites)
      .where(inArray(sites.name, unique.slice(i, i + 500)))
      .all();
    for (const r of rows) out.set(r.name, [...(out.get(r.name) ?? []), r]);
  }
  return out;
}

/** The first of the same-named candidates within about 100 m of a row's coordinates: the same site (uploads and the form). */
export function findSite<T extends { latitude: number; longitude: number }>(
  candidates: T[] | undefined,
  lat: number,
  lon: number,
): T | undefined {
  return candidates?.find((s) => distanceM(s.latitude, s.longitude, lat, lon) <= SITE_MATCH_M);
}

/** The lab of a row: named, else by the lab code's prefix, else the uploader's own lab. */
export function resolveLab(
  row: DeterminationRow,
  registry: Registry,
  userLabId: number | null,
): { labId: number } | { create: { name: string; codePrefix: string } } | { issue: RowIssue } {
  if (row.lab_name) {
    const lab = registry.labs.find((l) => l.name.toLowerCase() === row.lab_name!.toLowerCase());
    if (lab) return { labId: lab.id };
    return { create: { name: row.lab_name, codePrefix: codePrefixOf(row.lab_code) } };
  }
  const prefix = codePrefixOf(row.lab_code).toLowerCase();
  const byPrefix = registry.labs.find((l) => l.codePrefix.toLowerCase() === prefix);
  if (byPrefix) return { labId: byPrefix.id };
  if (userLabId != null) return { labId: userLabId };
  return {
    issue: {
      column: "lab_name",
      message: `Give lab_name: no laboratory in the registry uses the code prefix "${codePrefixOf(row.lab_code)}", and your account has no lab.`,
    },
  };
}

function codePrefixOf(labCode: string): string {
  return /^[A-Za-z]+/.exec(labCode)?.[0] ?? labCode.split(/[-\s]/)[0] ?? labCode;
}

function cellFor(c: StoredCell | undefined): unknown {
  if (c && typeof c === "object") {
    if ("date" in c) return new Date(c.date);
    return c;
  }
  return c;
}

/**
 * Validates every data row with the mapping: the row schema, then what needs the whole file or
 * the registry (duplicate lab codes, formula cells, labs). Row numbers are the spreadsheet's.
 */
export function validateRows(
  db: Db,
  sheet: { headers: string[]; rows: StoredRow[] },
  mapping: ColumnMapping,
  options: { userLabId?: number | null } = {},
): Validation {
  const index: [number, string][] = [];
  sheet.headers.forEach((h, i) => {
    const col = mapping[h];
    if (col && columnSpec(col)) index.push([i, col]);
  });
  const labCodeAt = index.find(([, c]) => c === "lab_code")?.[0];
  const labCodes =
    labCodeAt === undefined
      ? []
      : sheet.rows
          .map((r) => r.cells[labCodeAt])
          .filter((c): c is string | number => typeof c === "string" || typeof c === "number")
          .map((c) => String(c).trim());
  const registry = loadRegistry(db, labCodes);
  const notices: string[] = [];
  const mapped = new Set(index.map(([, c]) => c));
  for (const required of [
    "site_name",
    "latitude",
    "longitude",
    "sample_code",
    "material",
    "method",
    "lab_code",
    "constraint_kind",
  ]) {
    if (!mapped.has(required)) notices.push(`No column is mapped to ${required}; every row needs it.`);
  }
  const seenCodes = new Map<string, number>();
  const results: RowResult[] = [];
  for (const r of sheet.rows) {
    const raw: Record<string, unknown> = {};
    const formulaIssues: RowIssue[] = [];
    for (const [i, col] of index) {
      const cell = r.cells[i];
      if (cell && typeof cell === "object" && "formula" in cell) {
        formulaIssues.push({
          column: col,
          message: "Formula cells are not accepted; paste values instead (Paste Special → Values).",
        });
      } else raw[col] = cellFor(cell);
    }
    if (Object.values(raw).every(isBlankCell) && formulaIssues.length === 0) continue;
    const check = checkRow(raw, registry.ctx);
    const issues = [...formulaIssues, ...check.issues.filter((i) => !formulaIssues.some((f) => f.column === i.column))];
    const code = typeof raw.lab_code === "string" || typeof raw.lab_code === "number" ? String(raw.lab_code).trim() : "";
    if (code) {
      const first = seenCodes.get(code.toLowerCase());
      if (first !== undefined)
        issues.push({ column: "lab_code", message: `Lab code ${code} also appears in row ${first} of this file.` });
      else seenCodes.set(code.toLowerCase(), r.n);
    }
    let value: DeterminationRow | undefined;
    if (check.ok && issues.length === 0) {
      const lab = resolveLab(check.value, registry, options.userLabId ?? null);
      if ("issue" in lab) issues.push(lab.issue);
      else value = check.value;
    }
    results.push({ n: r.n, value, issues, warnings: check.warnings });
  }
  const errors = results.flatMap((r) => r.issues.map((i) => ({ row: r.n, column: i.column, message: i.message })));
  const warnings = results.flatMap((r) => r.warnings.map((i) => ({ row: r.n, column: i.column, message: i.message })));
  const valid = results.filter((r) => r.value);
  return {
    results,
    errors,
    warnings,
    validCount: valid.length,
    preview: previewOf(
      db,
      valid.map((r) => r.value!),
      registry,
      options.userLabId ?? null,
    ),
    notices,
  };
}

function previewOf(db: Db, rows: DeterminationRow[], registry: Registry, userLabId: number | null): UploadPreview {
  const existing = loadSitesByName(
    db,
    rows.map((r) => r.site_name),
  );
  const newSiteKeys: { name: string; lat: number; lon: number }[] = [];
  const newSitesByName = new Map<string, number[]>();
  const existingSiteIds = new Set<number>();
  const sampleKeys = new Set<string>();
  const byMethod: Record<string, number> = {};
  const newLabs = new Set<string>();
  const existingSampleSiteIds: number[] = [];
  for (const r of rows) {
    byMethod[r.method] = (byMethod[r.method] ?? 0) + 1;
    const lab = resolveLab(r, registry, userLabId);
    if ("create" in lab) newLabs.add(lab.create.name);
    const site = findSite(existing.get(r.site_name), r.latitude, r.longitude);
    if (site) {
      existingSiteIds.add(site.id);
      existingSampleSiteIds.push(site.id);
      sampleKeys.add(`s${site.id}|${r.sample_code}`);
    } else {
      const sameName = newSitesByName.get(r.site_name) ?? [];
      let k = sameName.find((i) => distanceM(newSiteKeys[i]!.lat, newSiteKeys[i]!.lon, r.latitude, r.longitude) <= SITE_MATCH_M);
      if (k === undefined) {
        k = newSiteKeys.push({ name: r.site_name, lat: r.latitude, lon: r.longitude }) - 1;
        newSitesByName.set(r.site_name, [...sameName, k]);
      }
      sampleKeys.add(`n${k}|${r.sample_code}`);
    }
  }
  let existingSamples = 0;
  const siteIds = [...new Set(existingSampleSiteIds)];
  if (siteIds.length) {
    const known = new Set(
      db
        .select({ siteId: samples.siteId, code: samples.fieldCode })
        .from(samples)
        .where(inArray(samples.siteId, siteIds))
        .all()
        .map((s) => `s${s.siteId}|${s.code}`),
    );
    for (const k of sampleKeys) if (known.has(k)) existingSamples++;
  }
  return {
    newSites: newSiteKeys.length,
    existingSites: existingSiteIds.size,
    newSamples: sampleKeys.size - existingSamples,
    existingSamples,
    determinations: rows.length,
    newLabs: [...newLabs],
    byMethod,
  };
}

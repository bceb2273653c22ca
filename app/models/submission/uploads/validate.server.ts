// Every row of a file checked against the registry (labs, sites, samples, curves) and the row schema,
// with the registry read once per file, and the preview of what a commit would create.

import { inArray, sql } from "drizzle-orm";
import { env } from "#app/utils/env.server.ts";
import type { Db } from "#app/db/client.server.ts";
import { determinations, materials, type UploadRowError } from "#app/db/schema.ts";
import { activeCurve, listCurves, type CurveRow } from "#app/models/calibration/curves.server.ts";
import { calendarProblem } from "#app/models/submission/calendar-problem.server.ts";
import { checkRow } from "#app/utils/determination-input/check-row.ts";
import { columnSpec } from "#app/utils/determination-input/columns.ts";
import type { DeterminationRow, RowContext, RowIssue } from "#app/utils/determination-input/row.ts";
import { isBlankCell } from "#app/utils/determination-input/cells.ts";
import { identifierKey, normaliseIdentifier } from "#app/utils/identifiers.ts";
import type { ColumnMapping } from "#app/models/submission/uploads/mapping.server.ts";
import type { StoredCell, StoredRow } from "#app/models/submission/uploads/read-sheet.server.ts";
import { Placement, type RowPlan } from "#app/models/submission/placement.server.ts";

export type RowResult = { n: number; value?: DeterminationRow; plan?: RowPlan; issues: RowIssue[]; warnings: RowIssue[] };

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
  /** Where the valid rows belong; a commit writes their plans in order. */
  placement: Placement;
  errors: UploadRowError[];
  warnings: UploadRowError[];
  validCount: number;
  preview: UploadPreview;
  notices: string[];
};

type Registry = {
  ctx: RowContext;
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
  return { ctx, curveFor };
}

/**
 * Can the registry give this row a calendar age? Limits and post-bomb ages are stored without
 * one (the checks report them); anything else that would fail at calibration — above all an age
 * beyond the curve — is a row error. Radiocarbon rows get the test `calibrate` itself applies
 * (beyondCurve, with the same input calibrate gets) and luminescence rows the age formula, without building a calendar
 * density (calendarOutcome would, and that dominated the time of a 5,500-row file).
 */
function cellFor(c: StoredCell | undefined): unknown {
  if (c && typeof c === "object") {
    if ("date" in c) return new Date(c.date);
    return c;
  }
  return c;
}

/**
 * Validates every data row with the mapping: the row schema, then what needs the whole file or
 * the registry (duplicate lab codes, formula cells, where each row belongs). Every problem of a row
 * is reported, each at its column. Row numbers are the spreadsheet's.
 */
export function validateRows(
  db: Db,
  sheet: { headers: string[]; rows: StoredRow[] },
  mapping: ColumnMapping,
  options: { userId: number; userLabId?: number | null },
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
          .map((c) => normaliseIdentifier(String(c)));
  const registry = loadRegistry(db, labCodes);
  const placement = new Placement(db, { userId: options.userId, userLabId: options.userLabId ?? null, mayRegisterLabs: true });
  const mapped = new Set(index.map(([, c]) => c));
  const notices = REQUIRED_COLUMNS.filter((c) => !mapped.has(c)).map((c) => `No column is mapped to ${c}; every row needs it.`);
  const checked: { n: number; check: ReturnType<typeof checkRow>; issues: RowIssue[] }[] = [];
  for (const r of sheet.rows) {
    const raw: Record<string, unknown> = {};
    const issues: RowIssue[] = [];
    for (const [i, col] of index) {
      const cell = r.cells[i];
      if (cell && typeof cell === "object" && "formula" in cell) {
        issues.push({ column: col, message: "Formula cells are not accepted; paste values instead (Paste Special → Values)." });
      } else raw[col] = cellFor(cell);
    }
    if (Object.values(raw).every(isBlankCell) && issues.length === 0) continue;
    const check = checkRow(raw, registry.ctx);
    issues.push(...check.issues.filter((i) => !issues.some((f) => f.column === i.column)));
    checked.push({ n: r.n, check, issues });
  }
  // A DOI's citation may be given on any one of the rows that cite it.
  placement.offerCitations(checked.map(({ n, check }) => ({ n, row: check.ok ? check.value : check.partial })));
  const seenCodes = new Map<string, number>();
  const results: RowResult[] = [];
  for (const { n, check, issues } of checked) {
    const code = (check.ok ? check.value : check.partial).lab_code;
    if (code) {
      const first = seenCodes.get(identifierKey(code));
      if (first !== undefined)
        issues.push({ column: "lab_code", message: `Lab code ${code} also appears in row ${first} of this file.` });
      else seenCodes.set(identifierKey(code), n);
    }
    const placed = placement.planRow(check.ok ? check.value : soundPart(check.partial, issues), { n });
    issues.push(...placed.issues);
    const warnings = [...check.warnings, ...placed.warnings];
    const value = check.ok && issues.length === 0 && placed.plan ? check.value : undefined;
    results.push({ n, value, plan: value ? placed.plan : undefined, issues, warnings });
  }
  const errors = results.flatMap((r) => r.issues.map((i) => ({ row: r.n, column: i.column, message: i.message })));
  const warnings = results.flatMap((r) => r.warnings.map((i) => ({ row: r.n, column: i.column, message: i.message })));
  const plans = results.flatMap((r) => (r.plan ? [r.plan] : []));
  return { results, placement, errors, warnings, validCount: plans.length, preview: previewOf(plans), notices };
}

const REQUIRED_COLUMNS = [
  "site_name",
  "latitude",
  "longitude",
  "sample_code",
  "material",
  "method",
  "lab_code",
  "constraint_kind",
];

/** The values of a failing row whose columns passed, for the checks that need them. */
function soundPart(partial: Partial<DeterminationRow>, issues: RowIssue[]): Partial<DeterminationRow> {
  const bad = new Set(issues.map((i) => i.column));
  return Object.fromEntries(Object.entries(partial).filter(([k]) => !bad.has(k))) as Partial<DeterminationRow>;
}

/** What committing the valid rows would create, counted from their plans. */
function previewOf(plans: RowPlan[]): UploadPreview {
  const newSites = new Set<object>();
  const existingSites = new Set<number>();
  const newSamples = new Set<object>();
  const existingSamples = new Set<number>();
  const newLabs = new Set<string>();
  const byMethod: Record<string, number> = {};
  for (const p of plans) {
    byMethod[p.row.method] = (byMethod[p.row.method] ?? 0) + 1;
    if ("newLab" in p.lab) newLabs.add(p.lab.newLab.name);
    if ("site" in p.site) existingSites.add(p.site.site.id);
    else newSites.add(p.site.newSite);
    if ("newSample" in p.sample) newSamples.add(p.sample.newSample);
    else existingSamples.add("sample" in p.sample ? p.sample.sample.id : p.sample.updateInPlace.id);
  }
  return {
    newSites: newSites.size,
    existingSites: existingSites.size,
    newSamples: newSamples.size,
    existingSamples: existingSamples.size,
    determinations: plans.length,
    newLabs: [...newLabs],
    byMethod,
  };
}

// An audit row's before and after, read as sentences: "Submitted by Ada Frostmere",
// "Error (1σ) changed from 40 to 45 ¹⁴C yr". Pure and client-safe; the labels come from labels.ts.

import {
  auditActionVerb,
  CONSTRAINT_KIND_LABELS,
  conversionFactorWords,
  curveWords,
  FLAG_LABELS,
  gradeWord,
  METHOD_LABELS,
  SIGNAL_LABELS,
  STATUS_LABELS,
} from "#app/utils/labels.ts";
import { formatPlain, UNITS } from "#app/utils/age-format.ts";

type FieldWords = {
  label: string;
  unit?: string;
  /** Turns a stored value into words; numbers otherwise get formatPlain with the unit. */
  words?: (v: unknown) => string;
};

const yesNo = (v: unknown) => (v ? "yes" : "no");
const fromTable = (table: Record<string, string>) => (v: unknown) => table[String(v)] ?? String(v);

/** Fields of a determination (and of its sample placement) as a person names them. */
export const FIELD_WORDS: Record<string, FieldWords> = {
  labCode: { label: "Lab code" },
  labId: { label: "Laboratory" },
  method: { label: "Method", words: fromTable(METHOD_LABELS) },
  constraintKind: { label: "Constraint kind", words: fromTable(CONSTRAINT_KIND_LABELS) },
  status: { label: "Status", words: fromTable(STATUS_LABELS) },
  grade: { label: "Grade", words: (v) => (v == null ? "ungraded" : `${v} ${gradeWord(Number(v))}`) },
  flags: {
    label: "Flags",
    words: (v) => (Array.isArray(v) && v.length ? v.map((f) => FLAG_LABELS[String(f)] ?? String(f)).join(", ") : "none"),
  },
  contributorId: { label: "Contributor" },
  publicationId: { label: "Publication" },
  uploadBatchId: { label: "Upload" },
  sampleId: { label: "Sample" },
  c14AgeYr: { label: "Radiocarbon age", unit: UNITS.c14Age },
  c14ErrorYr: { label: `Error (${UNITS.oneSigma})`, unit: UNITS.c14Years },
  f14c: { label: UNITS.f14c },
  f14cError: { label: `${UNITS.f14c} error (${UNITS.oneSigma})` },
  d13cPermil: { label: "δ¹³C", unit: UNITS.permil },
  ageNormalised: { label: "Age already δ¹³C-normalised", words: yesNo },
  isLimit: { label: "Greater-than age", words: yesNo },
  pretreatment: { label: "Pretreatment" },
  curveName: { label: "Curve", words: (v) => curveWords(v == null ? null : String(v)) },
  deltaRYr: { label: "ΔR", unit: UNITS.c14Years },
  deltaRErrorYr: { label: `ΔR error (${UNITS.oneSigma})`, unit: UNITS.c14Years },
  deltaRCurve: { label: "ΔR derived against", words: (v) => curveWords(v == null ? null : String(v)) },
  signal: { label: "Signal", words: fromTable(SIGNAL_LABELS) },
  mineral: { label: "Mineral" },
  deGy: { label: "Equivalent dose (De)", unit: UNITS.gy },
  deErrorGy: { label: `De error (${UNITS.oneSigma})`, unit: UNITS.gy },
  doseRateGyPerKa: { label: "Dose rate", unit: UNITS.gyPerKa },
  doseRateErrorGyPerKa: { label: `Dose-rate error (${UNITS.oneSigma})`, unit: UNITS.gyPerKa },
  kPercent: { label: "Potassium (K)", unit: "%" },
  uPpm: { label: "Uranium (U)", unit: "ppm" },
  thPpm: { label: "Thorium (Th)", unit: "ppm" },
  waterContentFraction: {
    label: "Water content",
    words: (v) => (typeof v === "number" ? `${formatPlain(v * 100)} % of dry mass` : String(v)),
  },
  grainSizeUm: { label: "Grain size", unit: "µm" },
  burialDepthM: { label: "Burial depth", unit: "m" },
  densityGPerCm3: { label: "Overburden density", unit: "g/cm³" },
  conversionFactors: { label: "Conversion factors", words: (v) => conversionFactorWords(v == null ? null : String(v)) },
  measurementYear: { label: "Year of measurement", words: (v) => String(v) },
  aliquots: { label: "Aliquots", words: (v) => String(v) },
  ageModel: { label: "Age model" },
  be10AtomsPerG: { label: "¹⁰Be concentration", unit: "atoms/g" },
  be10ErrorAtomsPerG: { label: `¹⁰Be error (${UNITS.oneSigma})`, unit: "atoms/g" },
  notes: { label: "Notes" },
  // the sample placement recorded beside an edit
  siteId: { label: "Site" },
  siteName: { label: "Site" },
  fieldCode: { label: "Field code" },
  material: { label: "Material" },
  depthCm: { label: "Depth", unit: "cm" },
  stratUnit: { label: "Stratigraphic unit" },
  stratOrder: { label: "Order in the section", words: (v) => String(v) },
  context: { label: "Context" },
};

/** Bookkeeping that changes with every edit and says nothing to a reader. */
const QUIET = new Set(["id", "version", "createdAt", "updatedAt", "created_at", "updated_at"]);
/** Ids that always change together with a named field (siteId with siteName). */
const SHADOWED = new Set(["siteId"]);

export function fieldLabel(field: string): string {
  return (
    FIELD_WORDS[field]?.label ??
    field
      .replace(/([a-z])([A-Z])/g, "$1 $2")
      .replace(/_/g, " ")
      .toLowerCase()
  );
}

/** A stored value in words; empty values read "nothing". */
export function valueWords(field: string, value: unknown, withUnit = true): string {
  if (value === null || value === undefined || value === "") return "nothing";
  const spec = FIELD_WORDS[field];
  if (spec?.words) return spec.words(value);
  if (typeof value === "number") return formatPlain(value, withUnit ? (spec?.unit ?? "") : "");
  if (typeof value === "boolean") return yesNo(value);
  if (typeof value === "string") return withUnit && spec?.unit ? `${value} ${spec.unit}` : value;
  return JSON.stringify(value);
}

function same(a: unknown, b: unknown): boolean {
  return JSON.stringify(a ?? null) === JSON.stringify(b ?? null);
}

/** One changed field as a sentence: "Error (1σ) changed from 40 to 45 ¹⁴C yr". */
export function changeSentence(field: string, before: unknown, after: unknown): string {
  const label = fieldLabel(field);
  const unit = FIELD_WORDS[field]?.words ? "" : (FIELD_WORDS[field]?.unit ?? "");
  const bothNumbers = typeof before === "number" && typeof after === "number";
  if (before == null || before === "") return `${label} set to ${valueWords(field, after)}`;
  if (after == null || after === "") return `${label} cleared (was ${valueWords(field, before)})`;
  if (bothNumbers && unit) {
    return `${label} changed from ${formatPlain(before)} to ${formatPlain(after)} ${unit}`;
  }
  return `${label} changed from ${valueWords(field, before)} to ${valueWords(field, after)}`;
}

type Snapshot = Record<string, unknown> | null | undefined;

function flatten(snapshot: Snapshot): Record<string, unknown> {
  const out: Record<string, unknown> = {};
  for (const [k, v] of Object.entries(snapshot ?? {})) {
    // the sample placement is nested under "sample"; its fields read like the determination's own
    if (k === "sample" && v && typeof v === "object" && !Array.isArray(v)) Object.assign(out, v);
    else out[k] = v;
  }
  return out;
}

/** The sentences for the fields that changed, in the order the fields appear. */
export function changeSentences(before: Snapshot, after: Snapshot): string[] {
  const b = flatten(before);
  const a = flatten(after);
  const keys = [...new Set([...Object.keys(b), ...Object.keys(a)])];
  return keys.filter((k) => !QUIET.has(k) && !SHADOWED.has(k) && !same(b[k], a[k])).map((k) => changeSentence(k, b[k], a[k]));
}

export type AuditStory = {
  /** "Submitted by Ada Frostmere", "Edited by the system". */
  headline: string;
  /** What changed, one sentence each; empty for a creation or removal. */
  details: string[];
};

/**
 * An audit row told as sentences. A creation or removal is one headline (its record is the
 * whole row, not a change); an edit lists each changed field. A grade reads with its word.
 */
export function auditStory(action: string, actorName: string | null | undefined, before: Snapshot, after: Snapshot): AuditStory {
  const who = actorName ? actorName : "the system";
  const verb = auditActionVerb(action);
  if (action === "determination.grade" && after && "grade" in after) {
    const g = after.grade as number | null;
    const grade = g == null ? "ungraded" : `${g} ${gradeWord(g)}`;
    const flags = Array.isArray(after.flags) && after.flags.length ? [`Flags: ${valueWords("flags", after.flags)}`] : [];
    return { headline: `Graded ${grade} by ${who}`, details: flags };
  }
  if (before == null || after == null) return { headline: `${verb} by ${who}`, details: [] };
  return { headline: `${verb} by ${who}`, details: changeSentences(before, after) };
}

/**
 * The same story from a field-by-field diff (what the determination page's loader computes):
 * a nested sample placement reads field by field, a creation or removal is its headline alone.
 */
export function storyFromChanges(
  action: string,
  actorName: string | null | undefined,
  changes: { field: string; before: unknown; after: unknown }[],
  whole: "created" | "removed" | null,
): AuditStory {
  const who = actorName ? actorName : "the system";
  const headline = `${auditActionVerb(action)} by ${who}`;
  if (whole) return { headline, details: [] };
  const details = changes.flatMap((c) => {
    const nested = (v: unknown) => (v && typeof v === "object" && !Array.isArray(v) ? (v as Record<string, unknown>) : null);
    if (c.field === "sample" && (nested(c.before) || nested(c.after))) return changeSentences(nested(c.before), nested(c.after));
    if (QUIET.has(c.field)) return [];
    return [changeSentence(c.field, c.before, c.after)];
  });
  return { headline, details };
}

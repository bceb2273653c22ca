// The single-determination form (new and edit): the registry's one row schema wrapped with the
// few things only the form has — whether the site is chosen from the registry or entered new,
// and that the laboratory is picked from a list. Client-safe: Conform validates with it in the
// browser, the server with the same schema plus the checks that need the database.

import { z } from "zod";
import { isBlankCell } from "#app/utils/determination-input/cells.ts";
import { inFormWords } from "#app/utils/determination-input/form-words.ts";
import { LUMINESCENCE_ONLY_COLUMNS, RADIOCARBON_ONLY_COLUMNS } from "#app/utils/determination-input/check-row.ts";
import { makeRowSchema } from "#app/utils/determination-input/schema.ts";
import type { DeterminationRow, Region, RowContext, RowIssue } from "#app/utils/determination-input/row.ts";

export const SITE_CHOICES = ["existing", "new"] as const;
export type SiteChoice = (typeof SITE_CHOICES)[number];

/** What a valid form yields: the row (template column names) and how its site is found. */
export type SubmissionValue = {
  siteChoice: SiteChoice;
  /** The chosen site when `siteChoice` is "existing". */
  siteId: number | null;
  row: DeterminationRow;
};

/** The registry's sites in brief: their count and the box around them (degrees). */
export type SiteArea = { count: number; south: number; north: number; west: number; east: number };

/** The registry lists the form offers; the loader sends them, the browser builds its context from them. */
export type FormOptions = {
  /**
   * How many sites the registry has and the box they lie in — not the sites themselves, which the
   * site combobox and the picker map ask the site search for, a page or a view at a time.
   */
  siteArea: SiteArea | null;
  labs: { id: number; name: string; codePrefix: string }[];
  materials: { name: string; methods: string[]; marine: boolean }[];
  curves: { name: string; displayName: string; kind: "atmospheric" | "marine" }[];
  regionOfInterest?: Region | null;
};

/** The validation context the browser can build without the database (no duplicate or curve-range checks). */
export function clientRowContext(options: Pick<FormOptions, "materials" | "curves" | "regionOfInterest">): RowContext {
  return {
    materials: options.materials.map((m) => m.name),
    curves: options.curves.map((c) => c.name),
    marineMaterials: options.materials.filter((m) => m.marine).map((m) => m.name),
    marineCurves: options.curves.filter((c) => c.kind === "marine").map((c) => c.name),
    materialMethods: Object.fromEntries(options.materials.map((m) => [m.name.toLowerCase(), m.methods])),
    regionOfInterest: options.regionOfInterest ?? null,
  };
}

const SITE_FIELDS = new Set(["site_name", "latitude", "longitude", "elevation_m", "setting"]);

/**
 * The form's schema. `serverChecks` runs on a row that passed every other rule and adds what
 * only the database can tell (an unknown laboratory, a sample already recorded with another
 * material), so those messages also land at their fields.
 */
export function makeSubmissionSchema(ctx: RowContext, serverChecks?: (value: SubmissionValue) => RowIssue[]) {
  const rowSchema = makeRowSchema(ctx);
  return z
    .object({ site_choice: z.unknown().optional(), site_id: z.unknown().optional() })
    .loose()
    .transform((raw, zctx): SubmissionValue => {
      // The row check names columns; the form speaks of its fields by their labels.
      const issue = (column: string, message: string) =>
        zctx.addIssue({ code: "custom", path: [column], message: inFormWords(message), input: raw[column] });
      const siteChoice: SiteChoice = raw.site_choice === "existing" ? "existing" : "new";
      let siteId: number | null = null;
      let failed = false;
      if (siteChoice === "existing") {
        const n = Number(raw.site_id);
        if (isBlankCell(raw.site_id) || !Number.isSafeInteger(n) || n <= 0) {
          issue("site_id", "Choose a site from the list, or enter a new site.");
          failed = true;
        } else siteId = n;
      }
      if (isBlankCell(raw.lab_name)) {
        issue("lab_name", "Choose the laboratory that measured it.");
        failed = true;
      }
      const parsed = rowSchema.safeParse(raw);
      if (!parsed.success) {
        for (const i of parsed.error.issues) {
          const column = String(i.path[0] ?? "");
          // Without a chosen site the site's own fields are empty; the one message at site_id says it.
          if (siteChoice === "existing" && siteId === null && SITE_FIELDS.has(column)) continue;
          issue(column, i.message);
        }
        return z.NEVER;
      }
      if (failed) return z.NEVER;
      const value: SubmissionValue = { siteChoice, siteId, row: parsed.data };
      const extra = serverChecks?.(value) ?? [];
      if (extra.length > 0) {
        for (const e of extra) issue(e.column, e.message);
        return z.NEVER;
      }
      return value;
    });
}

/** Measurement columns whose problems the live preview reports (the rest are the form's business). */
const NOT_PREVIEWED: ReadonlySet<string> = new Set(["pretreatment", "delta_r_curve", "aliquots", "age_model"]);
export const PREVIEW_COLUMNS: readonly string[] = [
  "method",
  "material",
  "age_normalised",
  "greater_than",
  "normalised_to_zero_permil",
  ...[...RADIOCARBON_ONLY_COLUMNS, ...LUMINESCENCE_ONLY_COLUMNS].filter((c) => !NOT_PREVIEWED.has(c)),
];

/** The live preview's answer; `warnings` are the row check's cautions, each at its field. */
export type PreviewResult = { warnings?: RowIssue[] } & (
  | { state: "empty"; message: string }
  | { state: "incomplete"; column: string; message: string }
  | { state: "no-age"; message: string; label: string }
  | {
      state: "ok";
      label: string;
      medianCalBp: number;
      hpd68: { from: number; to: number; p: number }[];
      hpd95: { from: number; to: number; p: number }[];
      /** Luminescence: the age in ka and the dose rate it used (computed from K, U, Th when not given). */
      luminescence?: { ageKa: number; errorKa: number; doseRate: number; doseRateError: number; computed: boolean };
    }
);

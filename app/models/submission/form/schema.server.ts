// The one-record form as the server runs it: what the form offers, the server's row context and the
// checks only the database can make, wrapped into the form's Zod schema.

import { env } from "#app/utils/env.server.ts";
import type { Db } from "#app/db/client.server.ts";
import { labs, materials } from "#app/db/schema.ts";
import { calendarProblem } from "#app/models/submission/calendar-problem.server.ts";
import { listCurves } from "#app/models/calibration/curves.server.ts";
import type { DeterminationRow as StoredDetermination } from "#app/models/submission/determinations.server.ts";
import type { RowContext, RowIssue } from "#app/utils/determination-input/row.ts";
import { clientRowContext, makeSubmissionSchema, type FormOptions, type SubmissionValue } from "#app/utils/submission-form.ts";
import { Placement } from "#app/models/submission/placement.server.ts";

export type Actor = { userId: number; ip?: string | null };

/** A change the registry refuses as a whole (not the contributor's, graded, withdrawn); `status` is the HTTP answer. */
export class SubmissionRefused extends Error {
  constructor(
    message: string,
    public status: 403 | 404 | 409 = 403,
  ) {
    super(message);
  }
}

/** Materials and curves: all that validation and the preview need. */
export function referenceOptions(db: Db): Pick<FormOptions, "materials" | "curves" | "regionOfInterest"> {
  const materialRows = db.select().from(materials).orderBy(materials.name).all();
  // One entry per short name: the active version's display name.
  const curveRows = new Map<string, FormOptions["curves"][number]>();
  for (const c of listCurves(db)) {
    if (c.active && !curveRows.has(c.name)) curveRows.set(c.name, { name: c.name, displayName: c.displayName, kind: c.kind });
  }
  return {
    materials: materialRows.map((m) => ({
      name: m.name,
      methods: m.methods.split(",").map((x) => x.trim()),
      marine: m.marine,
    })),
    curves: [...curveRows.values()].sort((a, b) => a.name.localeCompare(b.name)),
    regionOfInterest: env().REGION_OF_INTEREST,
  };
}

/** Everything the form offers: the registry's sites in brief (they are searched, never all sent), labs, materials and curves. */
export function formOptions(db: Db): FormOptions {
  const area = db.$client
    .prepare(
      "select count(*) as count, min(latitude) as south, max(latitude) as north, min(longitude) as west, max(longitude) as east from sites",
    )
    .get() as { count: number; south: number | null; north: number | null; west: number | null; east: number | null };
  const siteArea =
    area.count > 0 ? { count: area.count, south: area.south!, north: area.north!, west: area.west!, east: area.east! } : null;
  const labRows = db.select({ id: labs.id, name: labs.name, codePrefix: labs.codePrefix }).from(labs).orderBy(labs.name).all();
  return { siteArea, labs: labRows, ...referenceOptions(db) };
}

/** The server's validation context: the browser's, plus duplicate lab codes and the calendar-age check. */
export function serverRowContext(
  db: Db,
  options: Pick<FormOptions, "materials" | "curves">,
  excludeDeterminationId?: number,
): RowContext {
  const lookup = db.$client.prepare("select id from determinations where lower(lab_code) = lower(?) and id != ?").pluck();
  return {
    ...clientRowContext(options),
    regionOfInterest: env().REGION_OF_INTEREST,
    labCodeInRegistry: (code) => (lookup.get(code, excludeDeterminationId ?? -1) as number | undefined) ?? null,
    calendarProblem: (row) => calendarProblem(db, row),
  };
}

/**
 * Limits and post-bomb ages are accepted and stored without a calendar age; anything else that
 * cannot be given one (above all an age beyond the curve) is refused at the field it concerns.
 */
/** Where the form's row belongs, planned by the one placement rule the upload and the API use too. */
export function planFormRow(db: Db, value: SubmissionValue, editing: StoredDetermination | null, userId: number) {
  const placement = new Placement(db, { userId, userLabId: null, mayRegisterLabs: false, editing, oneRecord: true });
  return { placement, ...placement.planRow(value.row, { siteId: value.siteChoice === "existing" ? value.siteId : null }) };
}

/** What only the database can tell about a form that passed every other rule. */
export function submissionChecks(db: Db, value: SubmissionValue, editing: StoredDetermination | null): RowIssue[] {
  return planFormRow(db, value, editing, editing?.contributorId ?? 0).issues;
}

/** The form's schema as the server runs it (duplicates, curve range, labs and samples checked). */
export function serverSubmissionSchema(
  db: Db,
  options: Pick<FormOptions, "materials" | "curves">,
  editing: StoredDetermination | null = null,
) {
  return makeSubmissionSchema(serverRowContext(db, options, editing?.id), (value) => submissionChecks(db, value, editing));
}

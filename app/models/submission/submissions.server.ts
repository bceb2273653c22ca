// One determination submitted, edited or withdrawn by its contributor through the form, and the
// contributor's own list. Validation is the registry's one row schema (app/utils/determination-
// input.ts) wrapped by the form's schema; every write is one transaction with its audit row and
// the determination's calibration.

import { and, eq, sql } from "drizzle-orm";
import type { Db } from "#app/db/client.server.ts";
import { determinations, labs, materials, publications, samples, sites, type Method, type Status } from "#app/db/schema.ts";
import { audit } from "#app/models/audit.server.ts";
import { calendarOutcome, calibrateDeterminations, interpretMeasurement } from "#app/models/calibration/calibrations.server.ts";
import { runChecksFor } from "#app/models/review/check-run.server.ts";
import { activeCurve, listCurves, type CurveRow } from "#app/models/calibration/curves.server.ts";
import { LISTED_MEASUREMENT_SQL, type ListedMeasurement } from "#app/models/registry/query.server.ts";
import { findSite } from "#app/models/submission/uploads.server.ts";
import {
  auditSnapshot,
  determinationValues,
  insertDetermination,
  measurementFields,
  rowDoseRate,
  sampleValues,
  siteValues,
  type DeterminationRow as StoredDetermination,
} from "#app/models/submission/determinations.server.ts";
import { DEFAULT_CONVERSION_FACTORS, luminescenceAge } from "#app/science/luminescence.ts";
import { checkRow, isBlankCell, type DeterminationRow, type RowContext, type RowIssue } from "#app/utils/determination-input.ts";
import {
  clientRowContext,
  makeSubmissionSchema,
  PREVIEW_COLUMNS,
  type FormOptions,
  type PreviewResult,
  type SubmissionValue,
} from "#app/utils/submission-form.ts";

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

// ---------------------------------------------------------------- what the form offers

/** Materials and curves: all that validation and the preview need. */
export function referenceOptions(db: Db): Pick<FormOptions, "materials" | "curves"> {
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
  };
}

/** Everything the form offers: sites to choose from, labs, materials and curves. */
export function formOptions(db: Db): FormOptions {
  const siteRows = db
    .select({ id: sites.id, name: sites.name, latitude: sites.latitude, longitude: sites.longitude })
    .from(sites)
    .orderBy(sites.name, sites.id)
    .all();
  const labRows = db.select({ id: labs.id, name: labs.name, codePrefix: labs.codePrefix }).from(labs).orderBy(labs.name).all();
  return { sites: siteRows, labs: labRows, ...referenceOptions(db) };
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
    labCodeInRegistry: (code) => (lookup.get(code, excludeDeterminationId ?? -1) as number | undefined) ?? null,
    calendarProblem: (row) => calendarProblem(db, row),
  };
}

/**
 * Limits and post-bomb ages are accepted and stored without a calendar age; anything else that
 * cannot be given one (above all an age beyond the curve) is refused at the field it concerns.
 */
function calendarProblem(db: Db, row: DeterminationRow): RowIssue | null {
  const column = row.method === "radiocarbon" ? (row.c14_age != null ? "c14_age" : "f14c") : "de_gy";
  const fields = measurementFields(row);
  if (row.method === "radiocarbon") {
    const interpreted = interpretMeasurement(fields);
    if (interpreted.kind === "invalid") return { column, message: interpreted.message };
    if (interpreted.kind !== "age") return null;
  }
  const outcome = calendarOutcome(db, fields);
  return outcome.ok ? null : { column, message: outcome.error };
}

// ---------------------------------------------------------------- resolving site, sample, lab, publication

type SiteRef = { id: number; name: string };
type SitePlan = { site: SiteRef } | { create: true } | { issue: RowIssue };

/** The chosen site; or, for a new one, a site of the same name within about 100 m (as uploads do). */
function planSite(db: Db, value: SubmissionValue): SitePlan {
  if (value.siteChoice === "existing") {
    const site = db
      .select({ id: sites.id, name: sites.name })
      .from(sites)
      .where(eq(sites.id, value.siteId ?? -1))
      .get();
    return site ? { site } : { issue: { column: "site_id", message: "That site is no longer in the registry; choose another." } };
  }
  const { site_name, latitude, longitude } = value.row;
  const near = findSite(
    db
      .select({ id: sites.id, name: sites.name, latitude: sites.latitude, longitude: sites.longitude })
      .from(sites)
      .where(eq(sites.name, site_name))
      .all(),
    latitude,
    longitude,
  );
  return near ? { site: { id: near.id, name: near.name } } : { create: true };
}

type SampleRow = typeof samples.$inferSelect;
type SamplePlan =
  /** Join a sample already recorded at the site (its details are kept). */
  | { reuse: SampleRow }
  /** The edited determination's own sample, used by no other: change it where it is. */
  | { updateInPlace: SampleRow }
  | { create: true }
  | { issue: RowIssue };

const SAMPLE_FIELDS = [
  ["material", "material"],
  ["depth_cm", "depthCm"],
  ["strat_unit", "stratUnit"],
  ["strat_order", "stratOrder"],
  ["context", "context"],
] as const;

function planSample(db: Db, row: DeterminationRow, siteId: number | null, editing: StoredDetermination | null): SamplePlan {
  const target =
    siteId == null
      ? undefined
      : db
          .select()
          .from(samples)
          .where(and(eq(samples.siteId, siteId), eq(samples.fieldCode, row.sample_code)))
          .get();
  const current = editing ? db.select().from(samples).where(eq(samples.id, editing.sampleId)).get() : undefined;
  const othersOnCurrent = current
    ? (db.$client
        .prepare("select count(*) from determinations where sample_id = ? and id != ?")
        .pluck()
        .get(current.id, editing!.id) as number)
    : 0;
  const wanted = sampleValues(row);

  if (current && target && target.id === current.id) {
    if (othersOnCurrent === 0) return { updateInPlace: current };
    for (const [column, key] of SAMPLE_FIELDS) {
      if ((current[key] ?? null) !== (wanted[key] ?? null)) {
        return {
          issue: {
            column,
            message: `Sample ${current.fieldCode} also has ${othersOnCurrent} other determination${othersOnCurrent === 1 ? "" : "s"}, so its details stay as recorded (${column.replace("_", " ")}: ${current[key] ?? "none"}). To change them for this determination alone, give it a sample code of its own.`,
          },
        };
      }
    }
    return { reuse: current };
  }
  if (target) {
    if (target.material !== row.material) {
      return {
        issue: {
          column: "material",
          message: `Sample ${target.fieldCode} at this site is recorded as ${target.material}. Use that material, or give this sample a code of its own.`,
        },
      };
    }
    return { reuse: target };
  }
  if (current && othersOnCurrent === 0) return { updateInPlace: current };
  return { create: true };
}

function labByName(db: Db, name: string) {
  return db
    .select({ id: labs.id, name: labs.name })
    .from(labs)
    .where(sql`lower(${labs.name}) = lower(${name})`)
    .get();
}

/** What only the database can tell about a form that passed every other rule. */
export function submissionChecks(db: Db, value: SubmissionValue, editing: StoredDetermination | null): RowIssue[] {
  const issues: RowIssue[] = [];
  if (!labByName(db, value.row.lab_name ?? "")) {
    issues.push({
      column: "lab_name",
      message: `There is no laboratory named "${value.row.lab_name}" in the registry; choose one from the list.`,
    });
  }
  const site = planSite(db, value);
  if ("issue" in site) issues.push(site.issue);
  const sample = planSample(db, value.row, "site" in site ? site.site.id : null, editing);
  if ("issue" in sample) issues.push(sample.issue);
  return issues;
}

/** The form's schema as the server runs it (duplicates, curve range, labs and samples checked). */
export function serverSubmissionSchema(
  db: Db,
  options: Pick<FormOptions, "materials" | "curves">,
  editing: StoredDetermination | null = null,
) {
  return makeSubmissionSchema(serverRowContext(db, options, editing?.id), (value) => submissionChecks(db, value, editing));
}

function publicationFor(db: Db, doi: string | undefined): number | null {
  if (!doi) return null;
  const found = db.$client.prepare("select id from publications where lower(doi) = lower(?)").pluck().get(doi) as
    number | undefined;
  if (found != null) return found;
  return db
    .insert(publications)
    .values({ citation: `DOI ${doi}`, doi })
    .returning({ id: publications.id })
    .get().id;
}

/** Site, sample, lab and publication for a row, created where needed; call inside the write's transaction. */
function placeRow(db: Db, value: SubmissionValue, editing: StoredDetermination | null, actor: Actor) {
  const row = value.row;
  const lab = labByName(db, row.lab_name ?? "");
  if (!lab) throw new SubmissionRefused(`There is no laboratory named "${row.lab_name}".`, 409);
  const sitePlan = planSite(db, value);
  if ("issue" in sitePlan) throw new SubmissionRefused(sitePlan.issue.message, 409);
  let siteId: number;
  let createdSite = false;
  if ("site" in sitePlan) siteId = sitePlan.site.id;
  else {
    siteId = db.insert(sites).values(siteValues(row, actor.userId)).returning({ id: sites.id }).get().id;
    createdSite = true;
  }
  const samplePlan = planSample(db, row, siteId, editing);
  if ("issue" in samplePlan) throw new SubmissionRefused(samplePlan.issue.message, 409);
  let sampleId: number;
  let joinedSample = false;
  if ("reuse" in samplePlan) {
    sampleId = samplePlan.reuse.id;
    joinedSample = samplePlan.reuse.id !== editing?.sampleId;
  } else if ("updateInPlace" in samplePlan) {
    db.update(samples)
      .set({ siteId, ...sampleValues(row) })
      .where(eq(samples.id, samplePlan.updateInPlace.id))
      .run();
    sampleId = samplePlan.updateInPlace.id;
  } else {
    sampleId = db
      .insert(samples)
      .values({ siteId, ...sampleValues(row) })
      .returning({ id: samples.id })
      .get().id;
  }
  return { labId: lab.id, siteId, createdSite, sampleId, joinedSample, publicationId: publicationFor(db, row.doi) };
}

// ---------------------------------------------------------------- create

export type CreateResult = { id: number; createdSite: boolean; joinedSample: boolean; calendarAge: boolean };

/** A new determination from the form: one transaction with its audit row and calibration. */
export function createSubmission(db: Db, value: SubmissionValue, actor: Actor): CreateResult {
  return db.$client.transaction(() => {
    const placed = placeRow(db, value, null, actor);
    const det = insertDetermination(
      db,
      {
        ...determinationValues(value.row),
        sampleId: placed.sampleId,
        labId: placed.labId,
        publicationId: placed.publicationId,
        contributorId: actor.userId,
        status: "submitted",
      },
      actor.userId,
    );
    const cal = calibrateDeterminations(db, [det.id]);
    runChecksFor(db, [det.id]);
    return { id: det.id, createdSite: placed.createdSite, joinedSample: placed.joinedSample, calendarAge: cal.calibrated === 1 };
  })();
}

// ---------------------------------------------------------------- edit and withdraw

export function getDetermination(db: Db, id: number): StoredDetermination | undefined {
  return db.select().from(determinations).where(eq(determinations.id, id)).get();
}

function hasReviews(db: Db, id: number): boolean {
  return db.$client.prepare("select exists(select 1 from reviews where determination_id = ?)").pluck().get(id) === 1;
}

/**
 * Whether this person may still change the determination: only its contributor, and only while
 * no reviewer has graded it (status submitted or in review, and no review recorded).
 */
export function editRefusal(db: Db, det: StoredDetermination, userId: number): string | null {
  if (det.contributorId !== userId) return `Only the contributor who submitted ${det.labCode} can change or withdraw it.`;
  if (det.status === "withdrawn") return `${det.labCode} has been withdrawn; it can no longer be changed.`;
  if (det.status === "graded" || hasReviews(db, det.id)) {
    return `${det.labCode} has been graded by a reviewer, so it can no longer be changed or withdrawn. Ask the reviewer through the determination's review questions if something needs correcting.`;
  }
  return null;
}

const UNTRACKED = new Set(["version", "updatedAt", "createdAt"]);

/** The sample and site a determination hangs on, as its audit rows record them. */
function placeSnapshot(db: Db, sampleId: number): Record<string, unknown> | null {
  const row = db
    .select({
      siteId: sites.id,
      siteName: sites.name,
      fieldCode: samples.fieldCode,
      material: samples.material,
      depthCm: samples.depthCm,
      stratUnit: samples.stratUnit,
      stratOrder: samples.stratOrder,
      context: samples.context,
    })
    .from(samples)
    .innerJoin(sites, eq(sites.id, samples.siteId))
    .where(eq(samples.id, sampleId))
    .get();
  return row ?? null;
}

export type UpdateResult = { changed: boolean; version: number };

/**
 * Applies the edited form: determination (version + 1, one audit row with before and after,
 * including its sample), sample and site as needed, and a fresh calibration — one transaction.
 * The permission is checked again inside it, so a grade recorded meanwhile wins.
 */
export function updateSubmission(db: Db, id: number, value: SubmissionValue, actor: Actor): UpdateResult {
  return db.$client.transaction(() => {
    const before = getDetermination(db, id);
    if (!before) throw new SubmissionRefused("There is no determination with this number.", 404);
    const refusal = editRefusal(db, before, actor.userId);
    if (refusal) throw new SubmissionRefused(refusal, 403);
    const placeBefore = placeSnapshot(db, before.sampleId);
    const placed = placeRow(db, value, before, actor);
    const next = {
      ...determinationValues(value.row),
      sampleId: placed.sampleId,
      labId: placed.labId,
      publicationId: placed.publicationId,
    };
    // The factors a lab's own dose rate was computed with stay recorded while that dose rate stands.
    if (next.conversionFactors == null && before.conversionFactors != null && next.doseRateGyPerKa === before.doseRateGyPerKa) {
      (next as { conversionFactors: string | null }).conversionFactors = before.conversionFactors;
    }
    const placeAfter = placeSnapshot(db, placed.sampleId);
    const fieldChanged = Object.entries(next).some(
      ([k, v]) =>
        !UNTRACKED.has(k) && JSON.stringify((before as Record<string, unknown>)[k] ?? null) !== JSON.stringify(v ?? null),
    );
    if (!fieldChanged && JSON.stringify(placeBefore) === JSON.stringify(placeAfter)) {
      return { changed: false, version: before.version };
    }
    const after = db
      .update(determinations)
      .set({ ...next, version: before.version + 1, updatedAt: new Date() })
      .where(eq(determinations.id, id))
      .returning()
      .get();
    audit(db, {
      actorId: actor.userId,
      action: "determination.update",
      entity: "determination",
      entityId: id,
      before: { ...auditSnapshot(before), sample: placeBefore },
      after: { ...auditSnapshot(after), sample: placeAfter },
      ip: actor.ip,
    });
    if (placed.sampleId !== before.sampleId) removeIfOrphaned(db, before.sampleId, actor);
    calibrateDeterminations(db, [id]);
    runChecksFor(db, [id]);
    return { changed: true, version: after.version };
  })();
}

/** Deletes a sample an edit left without determinations (its only one moved to another sample). */
function removeIfOrphaned(db: Db, sampleId: number, actor: Actor) {
  const left = db.$client.prepare("select count(*) from determinations where sample_id = ?").pluck().get(sampleId) as number;
  if (left > 0) return;
  const sample = db.select().from(samples).where(eq(samples.id, sampleId)).get();
  if (!sample) return;
  db.delete(samples).where(eq(samples.id, sampleId)).run();
  audit(db, {
    actorId: actor.userId,
    action: "sample.delete",
    entity: "sample",
    entityId: sampleId,
    before: { ...sample, createdAt: sample.createdAt.toISOString() },
    after: null,
    ip: actor.ip,
  });
}

/** Withdraws a determination: status withdrawn, version + 1, audit row with before and after. */
export function withdrawSubmission(db: Db, id: number, actor: Actor): StoredDetermination {
  return db.$client.transaction(() => {
    const before = getDetermination(db, id);
    if (!before) throw new SubmissionRefused("There is no determination with this number.", 404);
    const refusal = editRefusal(db, before, actor.userId);
    if (refusal) throw new SubmissionRefused(refusal, 403);
    const after = db
      .update(determinations)
      .set({ status: "withdrawn" satisfies Status, version: before.version + 1, updatedAt: new Date() })
      .where(eq(determinations.id, id))
      .returning()
      .get();
    audit(db, {
      actorId: actor.userId,
      action: "determination.withdraw",
      entity: "determination",
      entityId: id,
      before: auditSnapshot(before),
      after: auditSnapshot(after),
      ip: actor.ip,
    });
    runChecksFor(db, [id]);
    return after;
  })();
}

// ---------------------------------------------------------------- the form, filled from a stored determination

/** The form's fields (template column names) as strings, from a stored determination. */
export function formDefaults(db: Db, det: StoredDetermination): Record<string, string> {
  const place = db
    .select({ sample: samples, site: sites, labName: labs.name, doi: publications.doi })
    .from(samples)
    .innerJoin(sites, eq(sites.id, samples.siteId))
    .innerJoin(labs, eq(labs.id, det.labId))
    .leftJoin(publications, eq(publications.id, det.publicationId ?? -1))
    .where(eq(samples.id, det.sampleId))
    .get()!;
  const s = (v: number | string | null | undefined) => (v == null ? "" : String(v));
  // A dose rate computed from K, U and Th is shown as its components only, so an edit recomputes it.
  const computedRate =
    det.conversionFactors === DEFAULT_CONVERSION_FACTORS &&
    [det.kPercent, det.uPpm, det.thPpm, det.waterContentFraction, det.burialDepthM, det.densityGPerCm3].every((v) => v != null);
  return {
    site_choice: "existing",
    site_id: String(place.site.id),
    site_name: place.site.name,
    latitude: s(place.site.latitude),
    longitude: s(place.site.longitude),
    elevation_m: s(place.site.elevationM),
    setting: s(place.site.setting),
    sample_code: place.sample.fieldCode,
    material: place.sample.material,
    depth_cm: s(place.sample.depthCm),
    strat_unit: s(place.sample.stratUnit),
    strat_order: s(place.sample.stratOrder),
    context: s(place.sample.context),
    method: det.method,
    lab_code: det.labCode,
    lab_name: place.labName,
    constraint_kind: det.constraintKind,
    c14_age: s(det.c14AgeYr),
    c14_error: s(det.c14ErrorYr),
    f14c: s(det.f14c),
    f14c_error: s(det.f14cError),
    d13c: s(det.d13cPermil),
    age_normalised: det.ageNormalised ? "yes" : "no",
    greater_than: det.isLimit ? "yes" : "",
    pretreatment: s(det.pretreatment),
    curve: s(det.curveName),
    delta_r: s(det.deltaRYr),
    delta_r_error: s(det.deltaRErrorYr),
    delta_r_curve: s(det.deltaRCurve),
    signal: s(det.signal),
    mineral: s(det.mineral),
    de_gy: s(det.deGy),
    de_error_gy: s(det.deErrorGy),
    dose_rate_gy_per_ka: computedRate ? "" : s(det.doseRateGyPerKa),
    dose_rate_error_gy_per_ka: computedRate ? "" : s(det.doseRateErrorGyPerKa),
    k_percent: s(det.kPercent),
    u_ppm: s(det.uPpm),
    th_ppm: s(det.thPpm),
    water_content: s(det.waterContentFraction),
    grain_size_um: s(det.grainSizeUm),
    burial_depth_m: s(det.burialDepthM),
    density_g_cm3: s(det.densityGPerCm3),
    measurement_year: s(det.measurementYear),
    aliquots: s(det.aliquots),
    age_model: s(det.ageModel),
    doi: s(place.doi),
    notes: s(det.notes),
  };
}

// ---------------------------------------------------------------- live preview

/**
 * The calendar age the form would give, without writing anything: the same row rules and the
 * same calendarOutcome the registry stores. Only the measurement's own fields matter here, so
 * the rest of the row is filled with placeholders.
 */
export function previewCalendarAge(
  db: Db,
  raw: Record<string, unknown>,
  options: Pick<FormOptions, "materials" | "curves">,
): PreviewResult {
  const method = typeof raw.method === "string" ? raw.method.trim().toLowerCase() : "";
  if (method !== "radiocarbon" && method !== "luminescence") {
    return { state: "empty", message: "Choose the method to see the calendar age." };
  }
  if (method === "radiocarbon" && isBlankCell(raw.c14_age) && isBlankCell(raw.f14c)) {
    return { state: "empty", message: "Type the ¹⁴C age (or F14C) and its error to see the calendar age." };
  }
  if (method === "luminescence" && isBlankCell(raw.de_gy)) {
    return { state: "empty", message: "Type De, the dose rate and the year of measurement to see the age." };
  }
  const measured: Record<string, unknown> = {};
  for (const c of PREVIEW_COLUMNS) measured[c] = raw[c];
  if (isBlankCell(measured.material)) {
    measured.material = options.materials.find((m) => m.methods.includes(method) && !m.marine)?.name;
  }
  const filled = {
    site_name: "preview",
    latitude: 58,
    longitude: -64,
    sample_code: "preview",
    lab_code: "preview",
    constraint_kind: "minimum",
    ...measured,
  };
  const check = checkRow(filled, clientRowContext(options));
  if (!check.ok) {
    const first = check.issues[0]!;
    return { state: "incomplete", column: first.column, message: first.message };
  }
  const row = check.value;
  const fields = measurementFields(row);
  const curveFor = (name: string): CurveRow | undefined => activeCurve(db, name);
  if (row.method === "radiocarbon") {
    const interpreted = interpretMeasurement(fields);
    if (interpreted.kind !== "age") return { state: "no-age", message: interpreted.message, label: fields.curveName ?? "" };
  }
  const outcome = calendarOutcome(db, fields, curveFor);
  if (!outcome.ok) return { state: "no-age", message: outcome.error, label: outcome.label };
  const result: PreviewResult = {
    state: "ok",
    label: outcome.label,
    medianCalBp: outcome.summary.medianCalBp,
    hpd68: outcome.summary.hpd68.map((r) => ({ from: r.from, to: r.to, p: r.p })),
    hpd95: outcome.summary.hpd95.map((r) => ({ from: r.from, to: r.to, p: r.p })),
  };
  if (row.method === "luminescence") {
    const rate = rowDoseRate(row)!;
    const age = luminescenceAge({ value: row.de_gy!, error: row.de_error_gy ?? 0 }, { value: rate.value, error: rate.error });
    result.luminescence = {
      ageKa: age.ageKa,
      errorKa: age.errorKa,
      doseRate: rate.value,
      doseRateError: rate.error,
      computed: rate.computed,
    };
  }
  return result;
}

// ---------------------------------------------------------------- the contributor's list

export const SUBMISSIONS_PAGE_SIZE = 50;

export type SubmissionFilters = { status?: Status; method?: Method; q?: string; page: number };

export type SubmissionListRow = {
  id: number;
  labCode: string;
  method: Method;
  signal: string | null;
  status: Status;
  grade: number | null;
  version: number;
  siteId: number;
  siteName: string;
  fieldCode: string;
  material: string;
} & ListedMeasurement & {
    medianCalBp: number | null;
    calibrationError: string | null;
    reviewed: boolean;
    createdAt: number;
    updatedAt: number;
  };

function escapeLike(s: string): string {
  return s.replace(/[\\%_]/g, (m) => `\\${m}`);
}

/** One page of the contributor's own determinations, newest first, with counts per status (three statements). */
export function listSubmissions(db: Db, userId: number, filters: SubmissionFilters) {
  const where = ["d.contributor_id = ?"];
  const params: unknown[] = [userId];
  if (filters.status) {
    where.push("d.status = ?");
    params.push(filters.status);
  }
  if (filters.method) {
    where.push("d.method = ?");
    params.push(filters.method);
  }
  if (filters.q) {
    const like = `%${escapeLike(filters.q)}%`;
    where.push("(d.lab_code like ? escape '\\' or t.name like ? escape '\\')");
    params.push(like, like);
  }
  const from = `from determinations d
    join samples s on s.id = d.sample_id
    join sites t on t.id = s.site_id
    left join calibrations c on c.determination_id = d.id and c.is_current = 1
    where ${where.join(" and ")}`;
  const total = db.$client
    .prepare(`select count(*) ${from}`)
    .pluck()
    .get(...params) as number;
  const pageCount = Math.max(1, Math.ceil(total / SUBMISSIONS_PAGE_SIZE));
  const page = Math.min(Math.max(1, filters.page), pageCount);
  const rows = db.$client
    .prepare(
      `select d.id, d.lab_code as labCode, d.method, d.signal, d.status, d.grade, d.version,
         t.id as siteId, t.name as siteName, s.field_code as fieldCode, s.material,
         ${LISTED_MEASUREMENT_SQL},
         c.median_cal_bp as medianCalBp, c.error as calibrationError,
         exists(select 1 from reviews r where r.determination_id = d.id) as reviewed,
         d.created_at as createdAt, d.updated_at as updatedAt
       ${from} order by d.created_at desc, d.id desc limit ? offset ?`,
    )
    .all(...params, SUBMISSIONS_PAGE_SIZE, (page - 1) * SUBMISSIONS_PAGE_SIZE) as (Omit<
    SubmissionListRow,
    "isLimit" | "reviewed"
  > & {
    isLimit: number;
    reviewed: number;
  })[];
  const counts = db.$client
    .prepare("select status, count(*) as n from determinations where contributor_id = ? group by status")
    .all(userId) as { status: Status; n: number }[];
  return {
    rows: rows.map((r) => ({ ...r, isLimit: r.isLimit === 1, reviewed: r.reviewed === 1 })),
    total,
    page,
    pageCount,
    pageSize: SUBMISSIONS_PAGE_SIZE,
    statusCounts: Object.fromEntries(counts.map((c) => [c.status, c.n])) as Partial<Record<Status, number>>,
  };
}

/** Whether a listed determination can still be edited or withdrawn by its contributor (the list's own rule). */
export function listRowEditable(row: Pick<SubmissionListRow, "status" | "reviewed">): boolean {
  return (row.status === "submitted" || row.status === "in_review") && !row.reviewed;
}

// ---------------------------------------------------------------- request helpers

/**
 * For a site chosen from the registry, its name and coordinates come from the registry, never
 * from what the browser sent, so the row is validated with the values that will be stored.
 */
export function applyChosenSite(db: Db, formData: FormData): void {
  if (formData.get("site_choice") !== "existing") return;
  const id = Number(formData.get("site_id"));
  if (!Number.isSafeInteger(id) || id <= 0) return;
  const site = db.select().from(sites).where(eq(sites.id, id)).get();
  if (!site) return;
  formData.set("site_name", site.name);
  formData.set("latitude", String(site.latitude));
  formData.set("longitude", String(site.longitude));
  for (const name of ["elevation_m", "setting"]) formData.delete(name);
}

/** A unique-constraint failure on the lab code: someone stored the same code between validation and write. */
export function isDuplicateLabCode(e: unknown): boolean {
  return (
    e instanceof Error &&
    (e as { code?: string }).code === "SQLITE_CONSTRAINT_UNIQUE" &&
    e.message.includes("determinations.lab_code")
  );
}

/** Starting values for a new determination: the contributor's own lab, radiocarbon. */
export function newFormDefaults(db: Db, userId: number, hasSites: boolean): Record<string, string> {
  const lab = db.$client
    .prepare("select l.name from users u join labs l on l.id = u.lab_id where u.id = ?")
    .pluck()
    .get(userId) as string | undefined;
  return {
    site_choice: hasSites ? "existing" : "new",
    method: "radiocarbon",
    lab_name: lab ?? "",
    age_normalised: "yes",
  };
}

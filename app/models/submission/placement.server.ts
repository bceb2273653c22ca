// Where a submitted row belongs — its site, sample, lab and publication — decided once for the form,
// the upload and the API. Planning only reads (a file is planned row by row, remembering what earlier
// rows will create); `place` writes what a plan needs, inside the caller's transaction. Synchronous
// and free of request state, so it runs wherever the writes run.

import { and, eq, sql } from "drizzle-orm";
import type { Db } from "#app/db/client.server.ts";
import { labs, samples, sites } from "#app/db/schema.ts";
import {
  sampleValues,
  siteValues,
  type DeterminationRow as StoredDetermination,
} from "#app/models/submission/determinations.server.ts";
import { type LabRef, type LabTarget, type NewLab, planLab, registerLab } from "#app/models/submission/placement-labs.server.ts";
import { PublicationPlanner, type PublicationTarget } from "#app/models/submission/placement-publications.server.ts";
import type { DeterminationRow, RowIssue } from "#app/utils/determination-input/row.ts";

type SiteRef = { id: number; name: string; latitude: number; longitude: number };
type SampleRow = typeof samples.$inferSelect;
type NewSite = { name: string; latitude: number; longitude: number; id?: number };
type NewSample = { site: SiteTarget; fieldCode: string; material: string; firstRow?: number; id?: number };

export type SiteTarget = { site: SiteRef } | { newSite: NewSite };
export type SampleTarget = { sample: SampleRow } | { updateInPlace: SampleRow } | { newSample: NewSample };
export type RowPlan = {
  site: SiteTarget;
  sample: SampleTarget;
  lab: LabTarget;
  publication: PublicationTarget;
  row: DeterminationRow;
};
export type PlanResult = { plan?: RowPlan; issues: RowIssue[]; warnings: RowIssue[] };

export type PlacementOptions = {
  userId: number;
  /** The contributor's own lab, if they have one: a row without lab_name belongs to it. */
  userLabId: number | null;
  /** Uploads and the API may register a lab the registry does not know (unconfirmed); the form picks from the list. */
  mayRegisterLabs: boolean;
  /** The determination being edited (form only): its own sample may change in place. */
  editing?: StoredDetermination | null;
  /** The one-record form: messages speak of the record, not of a file's other rows. */
  oneRecord?: boolean;
};

const SITE_MATCH_M = 100;

function distanceM(lat1: number, lon1: number, lat2: number, lon2: number): number {
  const rad = Math.PI / 180;
  const x = (lon2 - lon1) * rad * Math.cos(((lat1 + lat2) / 2) * rad);
  const y = (lat2 - lat1) * rad;
  return Math.hypot(x, y) * 6_371_000;
}

/** The first of the same-named candidates within about 100 m: the same site. */
function nearby<T extends { latitude: number; longitude: number }>(candidates: T[] | undefined, lat: number, lon: number) {
  return candidates?.find((s) => distanceM(s.latitude, s.longitude, lat, lon) <= SITE_MATCH_M);
}

const SAMPLE_FIELDS = [
  ["material", "material"],
  ["depth_cm", "depthCm"],
  ["strat_unit", "stratUnit"],
  ["strat_order", "stratOrder"],
  ["context", "context"],
] as const;

/** Plans rows one by one against the registry and what earlier rows of the same file will create. */
export class Placement {
  readonly labs: LabRef[];
  readonly userLab: LabRef | null;
  readonly newLabs: NewLab[] = [];
  private readonly sitesByName = new Map<string, SiteRef[]>();
  private readonly newSitesByName = new Map<string, NewSite[]>();
  private readonly samplesByKey = new Map<string, SampleRow | NewSample | null>();
  private readonly newSiteKeys = new Map<NewSite, number>();
  private readonly siteLookup;
  private readonly sampleLookup;
  private readonly publications: PublicationPlanner;

  constructor(
    private readonly db: Db,
    readonly options: PlacementOptions,
  ) {
    this.labs = db
      .select({ id: labs.id, name: labs.name, codePrefix: labs.codePrefix, confirmed: labs.confirmed })
      .from(labs)
      .all();
    this.userLab = this.labs.find((l) => l.id === options.userLabId) ?? null;
    this.siteLookup = db.$client.prepare("select id, name, latitude, longitude from sites where name = ?");
    this.sampleLookup = db
      .select()
      .from(samples)
      .where(and(eq(samples.siteId, sql.placeholder("siteId")), eq(samples.fieldCode, sql.placeholder("code"))))
      .prepare();
    this.publications = new PublicationPlanner(db, options.oneRecord ?? false);
  }

  /**
   * Where a row belongs, with the problems and cautions of its site, sample and lab columns. A row
   * with problems elsewhere may be given with only the columns that passed: what can be planned is,
   * so every problem of a row is reported at once. `n` is the row's number in its file.
   */
  planRow(row: Partial<DeterminationRow>, where: { n?: number; siteId?: number | null } = {}): PlanResult {
    const issues: RowIssue[] = [];
    const warnings: RowIssue[] = [];
    const lab = row.lab_code !== undefined || row.lab_name !== undefined ? planLab(this, row, issues, warnings) : null;
    const site = this.planSite(row, where.siteId, issues);
    const sample = site ? this.planSample(row, site, where.n, issues) : null;
    const publication = this.publications.plan(row, where.n, issues, warnings);
    if (!lab || !site || !sample || issues.length > 0) return { issues, warnings };
    const full = row as DeterminationRow;
    this.remember(full, site, sample);
    return { plan: { site, sample, lab, publication, row: full }, issues, warnings };
  }

  /** A file's rows, read before planning, so a DOI's citation may come on any row of the file. */
  offerCitations(rows: Iterable<{ row: Partial<DeterminationRow>; n?: number }>) {
    this.publications.offer(rows);
  }

  private planSite(row: Partial<DeterminationRow>, siteId: number | null | undefined, issues: RowIssue[]): SiteTarget | null {
    if (siteId !== undefined && siteId !== null) {
      const site = this.db
        .select({ id: sites.id, name: sites.name, latitude: sites.latitude, longitude: sites.longitude })
        .from(sites)
        .where(eq(sites.id, siteId))
        .get();
      if (!site) issues.push({ column: "site_id", message: "That site is no longer in the registry; choose another." });
      return site ? { site } : null;
    }
    const { site_name: name, latitude, longitude } = row;
    if (name === undefined || latitude === undefined || longitude === undefined) return null;
    if (!this.sitesByName.has(name)) this.sitesByName.set(name, this.siteLookup.all(name) as SiteRef[]);
    const existing = nearby(this.sitesByName.get(name), latitude, longitude);
    if (existing) return { site: existing };
    const planned = nearby(this.newSitesByName.get(name), latitude, longitude);
    return { newSite: planned ?? { name, latitude, longitude } };
  }

  private sampleKey(site: SiteTarget, code: string): string {
    if ("site" in site) return `s${site.site.id}|${code}`;
    const n = this.newSiteKeys.get(site.newSite);
    return n === undefined ? "" : `n${n}|${code}`;
  }

  private findSample(site: SiteTarget, code: string): SampleRow | NewSample | undefined {
    const key = this.sampleKey(site, code);
    if (!key) return undefined;
    if (!this.samplesByKey.has(key)) {
      const stored = "site" in site ? this.sampleLookup.get({ siteId: site.site.id, code }) : undefined;
      this.samplesByKey.set(key, stored ?? null);
    }
    return this.samplesByKey.get(key) ?? undefined;
  }

  private planSample(
    row: Partial<DeterminationRow>,
    site: SiteTarget,
    n: number | undefined,
    issues: RowIssue[],
  ): SampleTarget | null {
    const { sample_code: code, material } = row;
    if (code === undefined || material === undefined) return null;
    const editing = this.options.editing ?? null;
    const found = this.findSample(site, code);
    if (editing) return this.planEditedSample(row as DeterminationRow, site, found, editing, issues);
    if (found && found.material !== material) {
      const inFile = "site" in found;
      issues.push({
        column: "material",
        message: `Sample ${code} at this site is ${inFile ? `given as ${found.material} in row ${found.firstRow ?? "?"} of this file` : `recorded as ${found.material}`}. Use that material, or give this sample a code of its own.`,
      });
      return null;
    }
    if (found) return "site" in found ? { newSample: found } : { sample: found };
    return { newSample: { site, fieldCode: code, material, firstRow: n } };
  }

  /** An edit: the determination's own sample may change in place while no other determination shares it. */
  private planEditedSample(
    row: DeterminationRow,
    site: SiteTarget,
    target: SampleRow | NewSample | undefined,
    editing: StoredDetermination,
    issues: RowIssue[],
  ): SampleTarget | null {
    const current = this.db.select().from(samples).where(eq(samples.id, editing.sampleId)).get();
    const others = current
      ? (this.db.$client
          .prepare("select count(*) from determinations where sample_id = ? and id != ?")
          .pluck()
          .get(current.id, editing.id) as number)
      : 0;
    const stored = target && !("site" in target) ? target : undefined;
    const wanted = sampleValues(row);
    if (current && stored && stored.id === current.id) {
      if (others === 0) return { updateInPlace: current };
      for (const [column, key] of SAMPLE_FIELDS) {
        if ((current[key] ?? null) !== (wanted[key] ?? null)) {
          issues.push({
            column,
            message: `Sample ${current.fieldCode} also has ${others} other determination${others === 1 ? "" : "s"}, so its details stay as recorded (${column.replace("_", " ")}: ${current[key] ?? "none"}). To change them for this determination alone, give it a sample code of its own.`,
          });
          return null;
        }
      }
      return { sample: current };
    }
    if (stored) {
      if (stored.material !== row.material) {
        issues.push({
          column: "material",
          message: `Sample ${stored.fieldCode} at this site is recorded as ${stored.material}. Use that material, or give this sample a code of its own.`,
        });
        return null;
      }
      return { sample: stored };
    }
    if (current && others === 0) return { updateInPlace: current };
    return { newSample: { site, fieldCode: row.sample_code, material: row.material } };
  }

  /** Later rows of the file find the sites and samples this row will create. */
  private remember(row: DeterminationRow, site: SiteTarget, sample: SampleTarget) {
    if ("newSite" in site && !this.newSiteKeys.has(site.newSite)) {
      this.newSiteKeys.set(site.newSite, this.newSiteKeys.size);
      this.newSitesByName.set(row.site_name, [...(this.newSitesByName.get(row.site_name) ?? []), site.newSite]);
    }
    if ("newSample" in sample) {
      sample.newSample.site = site;
      this.samplesByKey.set(this.sampleKey(site, row.sample_code), sample.newSample);
    }
  }

  /** Writes what the plan needs (lab, site, sample, publication) and returns their ids; call inside a transaction. */
  place(plan: RowPlan, ctx: { batchId?: number | null; ip?: string | null } = {}) {
    const { row } = plan;
    const labId = "lab" in plan.lab ? plan.lab.lab.id : registerLab(this.db, plan.lab.newLab, this.options.userId, ctx.ip);
    let siteId: number;
    let createdSite = false;
    if ("site" in plan.site) siteId = plan.site.site.id;
    else {
      const s = plan.site.newSite;
      if (s.id === undefined) {
        s.id = this.db
          .insert(sites)
          .values({ ...siteValues(row, this.options.userId), createdInBatchId: ctx.batchId ?? null })
          .returning({ id: sites.id })
          .get().id;
        createdSite = true;
      }
      siteId = s.id;
    }
    let sampleId: number;
    let createdSample = false;
    if ("sample" in plan.sample) sampleId = plan.sample.sample.id;
    else if ("updateInPlace" in plan.sample) {
      sampleId = plan.sample.updateInPlace.id;
      this.db
        .update(samples)
        .set({ siteId, ...sampleValues(row) })
        .where(eq(samples.id, sampleId))
        .run();
    } else {
      const s = plan.sample.newSample;
      if (s.id === undefined) {
        s.id = this.db
          .insert(samples)
          .values({ siteId, ...sampleValues(row), createdInBatchId: ctx.batchId ?? null })
          .returning({ id: samples.id })
          .get().id;
        createdSample = true;
      }
      sampleId = s.id;
    }
    const publicationId = this.publications.place(plan.publication, ctx.batchId ?? null);
    return { labId, siteId, createdSite, sampleId, createdSample, publicationId };
  }
}

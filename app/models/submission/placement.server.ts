// Where a submitted row belongs: its site, sample, lab and publication, found or created.

import { and, eq, sql } from "drizzle-orm";
import type { Db } from "#app/db/client.server.ts";
import { labs, publications, samples, sites } from "#app/db/schema.ts";
import { findSite } from "#app/models/submission/uploads/validate.server.ts";
import {
  sampleValues,
  siteValues,
  type DeterminationRow as StoredDetermination,
} from "#app/models/submission/determinations.server.ts";
import type { DeterminationRow, RowIssue } from "#app/utils/determination-input/row.ts";
import type { SubmissionValue } from "#app/utils/submission-form.ts";
import { type Actor, SubmissionRefused } from "#app/models/submission/form/schema.server.ts";

type SiteRef = { id: number; name: string };
type SitePlan = { site: SiteRef } | { create: true } | { issue: RowIssue };

/** The chosen site; or, for a new one, a site of the same name within about 100 m (as uploads do). */
export function planSite(db: Db, value: SubmissionValue): SitePlan {
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

export function planSample(
  db: Db,
  row: DeterminationRow,
  siteId: number | null,
  editing: StoredDetermination | null,
): SamplePlan {
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

export function labByName(db: Db, name: string) {
  return db
    .select({ id: labs.id, name: labs.name })
    .from(labs)
    .where(sql`lower(${labs.name}) = lower(${name})`)
    .get();
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
export function placeRow(db: Db, value: SubmissionValue, editing: StoredDetermination | null, actor: Actor) {
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

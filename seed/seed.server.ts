// Writes the demo scenario into a database: demo people, labs, publications, sites, samples,
// determinations (each with its audit row), reviews, the scenario truth and the demo
// reconstruction, all in one transaction; then calibrates every determination and runs the checks.

import fs from "node:fs";
import { seedDemoReleases } from "./demo-releases.server.ts";
import { eq, inArray, sql } from "drizzle-orm";
import type { Db } from "#app/db/client.server.ts";
import { seedDemoEnsemble } from "./demo-ensemble.server.ts";
import { auditLog, labs, publications, reconstructions, type Role } from "#app/db/schema.ts";
import { calibrateAll } from "#app/models/calibration/calibrations.server.ts";
import { activeCurve, importBundledCurves, preparedCurve } from "#app/models/calibration/curves.server.ts";
import {
  insertDetermination,
  insertLab,
  insertPublication,
  insertSample,
  insertSite,
} from "#app/models/submission/determinations.server.ts";
import { createUser } from "#app/models/accounts/users.server.ts";
import { runAllChecks } from "#app/models/review/check-run.server.ts";
import { demoReconstruction } from "./demo-reconstruction.ts";
import { loadLand } from "./land.server.ts";
import {
  DEFAULT_SEED,
  DEMO_LABS,
  generateScenario,
  isochrones,
  retreatParams,
  scenarioSummary,
  type Scenario,
  type ScenarioSize,
} from "./scenario.ts";

export const DEMO_USERS: readonly { email: string; name: string; roles: Role[] }[] = [
  { email: "contributor@example.org", name: "Demo Contributor", roles: ["contributor"] },
  { email: "reviewer@example.org", name: "Demo Reviewer", roles: ["reviewer"] },
  { email: "modeller@example.org", name: "Demo Modeller", roles: ["modeller"] },
  { email: "editor@example.org", name: "Demo Editor", roles: ["editor"] },
  { email: "all-roles@example.org", name: "Demo All Roles", roles: ["contributor", "reviewer", "modeller", "editor"] },
];

export const DEMO_RECONSTRUCTION_NAME = "Demo ice cap isochrones (synthetic)";

export class SeedRefusedError extends Error {}

export interface SeedOptions {
  size: ScenarioSize;
  seed?: number;
  /** Replace existing demo data instead of refusing to seed. */
  reset?: boolean;
  /** Calibrate every determination after seeding (default true). */
  calibrate?: boolean;
  /** Write and score the demo model-run ensemble (default: when calibrating). */
  ensemble?: boolean;
  /** Called with each stage's name and duration. */
  onStage?: (stage: string, ms: number) => void;
  onCalibrationProgress?: (done: number, total: number) => void;
}

export interface SeedResult {
  summary: ReturnType<typeof scenarioSummary>;
  calibrated: number;
  calibrationFailures: number;
  timings: { stage: string; ms: number }[];
  userIds: Record<string, number>;
  reconstructionId: number;
}

const DAY_MS = 86_400_000;

export async function seedDemo(db: Db, options: SeedOptions): Promise<SeedResult> {
  const timings: { stage: string; ms: number }[] = [];
  const stage = async <T>(name: string, fn: () => T | Promise<T>): Promise<T> => {
    const t0 = performance.now();
    const out = await fn();
    const ms = performance.now() - t0;
    timings.push({ stage: name, ms });
    options.onStage?.(name, ms);
    return out;
  };

  await stage("curves", async () => {
    if (!activeCurve(db, "intcal20") || !activeCurve(db, "marine20")) await importBundledCurves(db);
  });

  const mustReset = await stage("check existing data", () => {
    const count = db.$client.prepare("select count(*) as n from determinations").get() as { n: number };
    if (count.n === 0) return false;
    if (!options.reset) {
      throw new SeedRefusedError(
        `The database already holds ${count.n} determinations; seeding would mix the demo with them. Run with --reset to replace the demo data.`,
      );
    }
    assertOnlyDemoData(db);
    return true;
  });

  const scenario = await stage("generate scenario", () => {
    const intcal = preparedCurve(db, activeCurve(db, "intcal20")!.id);
    const marine = preparedCurve(db, activeCurve(db, "marine20")!.id);
    return generateScenario({ land: loadLand("50m"), intcal, marine }, { size: options.size, seed: options.seed });
  });

  // The reset and the new data share one transaction: a failure leaves the old demo in place.
  const written = await stage(mustReset ? "reset and write registry" : "write registry", () =>
    db.$client.transaction(() => {
      if (mustReset) resetDemoData(db);
      return writeScenario(db, scenario);
    })(),
  );

  let calibrated = 0;
  let calibrationFailures = 0;
  if (options.calibrate !== false) {
    await stage("calibrate", () => {
      const r = calibrateAll(db, { onProgress: options.onCalibrationProgress });
      calibrated = r.calibrated;
      calibrationFailures = r.failed;
    });
    await stage("checks", () => runAllChecks(db));
    await stage("releases", () => seedDemoReleases(db, written.userIds["editor@example.org"]!));
  }
  if (options.calibrate !== false && options.ensemble !== false) {
    await stage("demo ensemble", () => seedDemoEnsemble(db, scenario.retreat, written.userIds["modeller@example.org"]));
  }
  return {
    summary: scenarioSummary(scenario),
    calibrated,
    calibrationFailures,
    timings,
    userIds: written.userIds,
    reconstructionId: written.reconstructionId,
  };
}

/** Runs inside one transaction (its own, or the caller's): a failure leaves the database as it was. */
function writeScenario(db: Db, scenario: Scenario) {
  const now = Date.now();
  const at = (daysAgo: number, salt: number) => new Date(now - daysAgo * DAY_MS - (salt % 43_200) * 1000);
  const sqlite = db.$client;
  return sqlite.transaction(() => {
    const userIds: Record<string, number> = {};
    for (const u of DEMO_USERS) userIds[u.email] = createUser(db, u);
    // The demo is spread over invented contributors; the sign-in account is one of them.
    const contributorIds = scenario.contributors.map(
      (c) => userIds[c.email] ?? (userIds[c.email] = createUser(db, { email: c.email, name: c.name, roles: ["contributor"] })),
    );
    const reviewerId = userIds["reviewer@example.org"];

    const labIds = scenario.labs.map((l) => {
      const existing = db.select({ id: labs.id }).from(labs).where(eq(labs.codePrefix, l.codePrefix)).get();
      return existing?.id ?? insertLab(db, { name: l.name, codePrefix: l.codePrefix, city: l.city }).id;
    });
    const publicationIds = scenario.publications.map((p) => {
      const existing = db.select({ id: publications.id }).from(publications).where(eq(publications.doi, p.doi)).get();
      return (
        existing?.id ??
        insertPublication(db, {
          citation: p.citation,
          doi: p.doi,
          year: p.year,
          authors: p.authors,
          title: p.title,
          journal: p.journal,
        }).id
      );
    });

    // Sites and samples are dated by their oldest determination.
    const siteDays = new Array<number>(scenario.sites.length).fill(0);
    const sampleDays = new Array<number>(scenario.samples.length).fill(0);
    for (const d of scenario.determinations) {
      const si = scenario.samples[d.sampleIndex].siteIndex;
      sampleDays[d.sampleIndex] = Math.max(sampleDays[d.sampleIndex], d.submittedDaysAgo);
      siteDays[si] = Math.max(siteDays[si], d.submittedDaysAgo);
    }
    const siteIds = scenario.sites.map((s, i) => {
      const { coastal: _c, deglaciationCalBp: _d, publicationIndex: _p, contributorIndex, ...values } = s;
      return insertSite(db, { ...values, createdBy: contributorIds[contributorIndex], createdAt: at(siteDays[i] + 1, i) }).id;
    });
    const sampleIds = scenario.samples.map((s, i) => {
      const { siteIndex, constraintKind: _k, trueAgeCalBp: _t, fault: _f, ...values } = s;
      return insertSample(db, { ...values, siteId: siteIds[siteIndex], createdAt: at(sampleDays[i] + 0.5, i) }).id;
    });

    const insertTruth = sqlite.prepare(
      "insert into scenario_truth (determination_id, true_age_cal_bp, planted_fault) values (?, ?, ?)",
    );
    const insertReview = sqlite.prepare(
      "insert into reviews (determination_id, reviewer_id, grade, flags, comment, created_at) values (?, ?, ?, ?, ?, ?)",
    );
    const markGraded = sqlite.prepare(
      "update determinations set status = 'graded', grade = ?, version = 2, updated_at = ? where id = ?",
    );
    const insertAudit = sqlite.prepare(
      "insert into audit_log (at, actor_id, action, entity, entity_id, before, after) values (?, ?, ?, 'determination', ?, ?, ?)",
    );
    scenario.determinations.forEach((d, i) => {
      const {
        sampleIndex,
        labIndex,
        publicationIndex,
        submittedDaysAgo,
        review,
        truth,
        status,
        grade: _grade,
        ...measurement
      } = d;
      const createdAt = at(submittedDaysAgo, i);
      const contributorId = contributorIds[scenario.sites[scenario.samples[sampleIndex].siteIndex].contributorIndex];
      // Graded determinations are created as submitted and then graded, as in the workflow.
      const row = insertDetermination(
        db,
        {
          ...measurement,
          sampleId: sampleIds[sampleIndex],
          labId: labIds[labIndex],
          publicationId: publicationIndex === null ? null : publicationIds[publicationIndex],
          contributorId,
          status: status === "graded" ? "in_review" : status,
          createdAt,
          updatedAt: createdAt,
        },
        contributorId,
      );
      insertTruth.run(row.id, truth.trueAgeCalBp, truth.plantedFault);
      if (review) {
        const reviewedAt = Math.max(createdAt.getTime() + 3_600_000, now - review.daysAgo * DAY_MS);
        insertReview.run(row.id, reviewerId, review.grade, JSON.stringify(review.flags), review.comment, reviewedAt);
        markGraded.run(review.grade, reviewedAt, row.id);
        insertAudit.run(
          reviewedAt,
          reviewerId,
          "determination.grade",
          String(row.id),
          JSON.stringify({ status: "in_review", grade: null, version: 1 }),
          JSON.stringify({ status: "graded", grade: review.grade, flags: review.flags, version: 2 }),
        );
      }
    });

    // Not the truth: an expert-like reconstruction drawn from it with smooth errors of a few hundred years.
    const demo = demoReconstruction(scenario.retreat, scenario.seed);
    db.update(reconstructions).set({ usedForChecks: false }).run();
    const reconstruction = db
      .insert(reconstructions)
      .values({
        name: DEMO_RECONSTRUCTION_NAME,
        description: `Margin isochrones every 250 years of the synthetic demo ice cap (seed ${scenario.seed}), drawn from the scenario's retreat history with smooth age errors of a few hundred years; stated uncertainty ± ${demo.uncertaintyYr} yr (1σ). Invented for the demo, not a real reconstruction.`,
        geojson: demo.isochrones,
        uncertaintyYr: demo.uncertaintyYr,
        usedForChecks: true,
        isDemo: true,
        createdBy: userIds["modeller@example.org"],
      })
      .returning({ id: reconstructions.id })
      .get();
    return { userIds, reconstructionId: reconstruction.id };
  })();
}

/** Demo determinations are exactly those with a scenario truth row; anything else is real work. */
function assertOnlyDemoData(db: Db) {
  const foreign = db.$client
    .prepare("select count(*) as n from determinations where id not in (select determination_id from scenario_truth)")
    .get() as { n: number };
  if (foreign.n > 0) {
    throw new SeedRefusedError(
      `The database holds ${foreign.n} determinations that are not demo data; --reset only replaces demo data. Use a fresh database.`,
    );
  }
}

/**
 * Removes the demo data, children before parents. Refuses when the registry holds
 * determinations that are not demo data, so real work is never deleted.
 */
export function resetDemoData(db: Db) {
  const sqlite = db.$client;
  assertOnlyDemoData(db);
  const demo = "(select determination_id from scenario_truth)";
  db.transaction(() => {
    const siteIds = sqlite
      .prepare(`select distinct s.site_id as id from samples s join determinations d on d.sample_id = s.id`)
      .all() as { id: number }[];
    const sampleIds = sqlite.prepare(`select distinct sample_id as id from determinations`).all() as { id: number }[];
    const publicationIds = sqlite
      .prepare(`select distinct publication_id as id from determinations where publication_id is not null`)
      .all() as { id: number }[];
    // Everything that points at a determination: scores, release items (and their releases), reviews, checks, calibrations.
    sqlite.exec(`delete from model_run_scores where determination_id in ${demo}`);
    const releases = `(select distinct release_id from release_items where determination_id in ${demo})`;
    sqlite.exec(`update model_runs set release_id = null where release_id in ${releases}`);
    const releaseIds = sqlite.prepare(`select * from ${releases}`).pluck().all() as number[];
    sqlite.exec(`delete from release_items where determination_id in ${demo}`);
    const dropRelease = sqlite.prepare("delete from releases where id = ?");
    for (const id of releaseIds) dropRelease.run(id);
    for (const table of ["check_results", "review_messages", "reviews", "calibrations"]) {
      sqlite.exec(`delete from ${table} where determination_id in ${demo}`);
    }
    db.delete(auditLog)
      .where(
        sql`${auditLog.entity} = 'determination' and ${auditLog.entityId} in (select cast(determination_id as text) from scenario_truth)`,
      )
      .run();
    sqlite.exec(`delete from determinations where id in ${demo}`);
    sqlite.exec(`delete from scenario_truth`);
    const del = (table: string, ids: { id: number }[], guard: string) => {
      const stmt = sqlite.prepare(`delete from ${table} where id = ? and ${guard}`);
      for (const { id } of ids) stmt.run(id);
    };
    del("samples", sampleIds, "id not in (select sample_id from determinations)");
    del("sites", siteIds, "id not in (select site_id from samples)");
    del("publications", publicationIds, "id not in (select publication_id from determinations where publication_id is not null)");
    const prefixes = DEMO_LABS.map((l) => l.codePrefix);
    const demoLabs = db.select({ id: labs.id }).from(labs).where(inArray(labs.codePrefix, prefixes)).all();
    del(
      "labs",
      demoLabs,
      `id not in (select lab_id from determinations) and id not in (select lab_id from users where lab_id is not null)
       and id not in (select lab_id from upload_batches where lab_id is not null)`,
    );
    db.delete(reconstructions).where(eq(reconstructions.isDemo, true)).run();
  });
}

/** Writes the demo isochrones for a seed to a GeoJSON file (no database needed). */
export function exportIsochrones(file: string, seed?: number): number {
  const collection = isochrones(retreatParams(seed ?? DEFAULT_SEED));
  fs.writeFileSync(file, JSON.stringify(collection));
  return collection.features.length;
}

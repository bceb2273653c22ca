// Small model-run files, calendar densities and the shared set-up for tests that score runs.
import { existsSync, mkdtempSync, readdirSync, readFileSync, rmSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { afterAll } from "vitest";
import { getDb } from "#app/db/client.server.ts";
import { calibrations, determinations, labs, modelRuns, samples, sites } from "#app/db/schema.ts";
import { createToken } from "#app/models/accounts/tokens.server.ts";
import { jobFinished } from "#app/models/jobs.server.ts";
import { writeNetcdf4 } from "#app/models/model-runs/netcdf-writer.server.ts";
import { runFilesDir } from "#app/models/model-runs/runs.server.ts";
import { ORIGIN, personWithSession } from "#tests/support/auth.ts";
import { seedForFile } from "#tests/support/test-db.ts";

/** A normal density N(μ, σ) as stored: Float32 little-endian from the youngest year. */
export function densityBlob(mu: number, sigma: number) {
  const start = Math.floor(mu - 5 * sigma);
  const values = new Float32Array(Math.ceil(10 * sigma));
  let t = 0;
  for (let i = 0; i < values.length; i++) t += values[i] = Math.exp(-(((start + i - mu) / sigma) ** 2) / 2);
  for (let i = 0; i < values.length; i++) values[i] /= t;
  return { start, blob: Buffer.from(values.buffer) };
}

export const RUN_AGES = [12000, 11000, 10000, 9000, 8000];

/**
 * A NetCDF-4 run on a lat/lon grid 56–58 N, 67–65 W whose ice leaves everywhere at `degl` cal BP.
 * Units "years since 1950-01-01" say how they map; any other units count model years from 12,000 cal BP.
 */
export async function writeRunFile(dir: string, name: string, degl: number, units = "years since 1950-01-01") {
  const path = join(dir, name);
  await writeNetcdf4(path, {
    time: {
      name: "time",
      values: units.startsWith("years since") ? RUN_AGES.map((a) => -a) : RUN_AGES.map((a) => 12000 - a),
      attrs: { units },
    },
    y: { name: "lat", values: [56, 57, 58], attrs: { units: "degrees_north" } },
    x: { name: "lon", values: [-67, -66, -65], attrs: { units: "degrees_east" } },
    ice: {
      name: "thk",
      attrs: { standard_name: "land_ice_thickness", units: "m" },
      slice: (k) => new Float32Array(9).fill(RUN_AGES[k] > degl ? 500 : 0),
    },
  });
  return path;
}

/** The same file as a File, as a form would send it. */
export async function runFile(dir: string, name: string, degl: number, units?: string) {
  const path = await writeRunFile(dir, name, degl, units);
  return new File([readFileSync(path)], name);
}

export type Person = Awaited<ReturnType<typeof personWithSession>>;

export type RunFixture = {
  /** The modeller who uploads, with a session cookie and an API token. */
  modeller: Person;
  token: string;
  /** The dates, in the order of `grades`. */
  detIds: number[];
  /** A private folder for the test file's run files, removed after the file. */
  dir: string;
};

/**
 * The set-up every model-run test file shares, written once for the file (seedForFile): a
 * modeller with a session and a token, and luminescence minimum-limiting dates at one site
 * (57° N, 66° W) whose calendar density is N(10,000, 100) cal BP — one date for each grade given
 * (0 is rejected). `prefix` keeps the file's lab, site and codes its own.
 */
export function seedRunFixture(prefix: string, grades: number[] = [3]): RunFixture {
  const fixture = { dir: mkdtempSync(join(tmpdir(), `thawline-${prefix.toLowerCase()}-`)) } as RunFixture;
  afterAll(() => rmSync(fixture.dir, { recursive: true, force: true }));
  seedForFile(async () => {
    const db = getDb();
    fixture.modeller = await personWithSession(["modeller"]);
    fixture.token = createToken(db, fixture.modeller.id, "runs", { actorId: fixture.modeller.id }).token;
    const contributor = await personWithSession(["contributor"]);
    const lab = db
      .insert(labs)
      .values({ name: `${prefix} Test Laboratory`, codePrefix: prefix, city: "Nowhere" })
      .returning()
      .get();
    const site = db
      .insert(sites)
      .values({ name: `${prefix} Test Site`, latitude: 57, longitude: -66 })
      .returning()
      .get();
    const sample = db
      .insert(samples)
      .values({ siteId: site.id, fieldCode: `${prefix}-F1`, material: "marine shell" })
      .returning()
      .get();
    const { start, blob } = densityBlob(10000, 100);
    fixture.detIds = grades.map((grade, i) => {
      const d = db
        .insert(determinations)
        .values({
          sampleId: sample.id,
          labId: lab.id,
          contributorId: contributor.id,
          labCode: `${prefix}-${String(i + 1).padStart(4, "0")}`,
          method: "luminescence",
          constraintKind: "minimum",
          status: "graded",
          grade,
        })
        .returning()
        .get();
      db.insert(calibrations)
        .values({
          determinationId: d.id,
          curveLabel: "luminescence",
          isCurrent: true,
          densityStartCalBp: start,
          density: blob,
          medianCalBp: 10000,
        })
        .run();
      return d.id;
    });
  });
  return fixture;
}

/** A /runs page upload (intent "upload") of these files with the modeller's session. */
export function pageUpload(cookie: string, files: File[], extra: Record<string, string | File> = {}) {
  const body = new FormData();
  body.append("intent", "upload");
  for (const f of files) body.append("file", f);
  for (const [k, v] of Object.entries(extra)) body.append(k, v);
  return new Request(`${ORIGIN}/runs`, { method: "POST", body, headers: { Cookie: cookie } });
}

/** A POST /api/v1/model-runs with a bearer token. */
export function apiUpload(token: string, form: Record<string, string | File>) {
  const body = new FormData();
  for (const [k, v] of Object.entries(form)) body.append(k, v);
  return new Request(`${ORIGIN}/api/v1/model-runs`, { method: "POST", body, headers: { Authorization: `Bearer ${token}` } });
}

/** Waits for every scoring job the runs in the database record. */
export async function scoringIdle() {
  const ids = new Set(
    getDb()
      .select({ jobId: modelRuns.jobId })
      .from(modelRuns)
      .all()
      .map((r) => r.jobId),
  );
  for (const id of ids) if (id) await jobFinished(id);
}

/** How many runs and kept run files there are (a refused upload must leave both unchanged). */
export function runsKept() {
  const files = existsSync(runFilesDir()) ? readdirSync(runFilesDir()).length : 0;
  return { rows: getDb().select().from(modelRuns).all().length, files };
}

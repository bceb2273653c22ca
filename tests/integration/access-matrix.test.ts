/*
 * Who may open what. Every route in app/routes.ts must have a row here saying what each audience
 * gets from its loader (GET) and its action (POST); a route added without a row fails this test,
 * and so does a row whose route is gone or whose loader/action exists on one side only.
 *
 * Audiences: signed-out visitors, and one person per role holding only that role. Page routes are
 * called with the person's session cookie; routes marked `auth: "token"` with their API token.
 */
import path from "node:path";
import { describe, expect, it } from "vitest";
import { seedForFile } from "#tests/support/test-db.ts";
import type { RouteConfigEntry } from "@react-router/dev/routes";
import routes from "#app/routes.ts";
import Database from "better-sqlite3";
import { drizzle } from "drizzle-orm/better-sqlite3";
import { getDb, setDb, schema, type Db } from "#app/db/client.server.ts";
import { determinations, jobs, labs, publications, releases, samples, sites, uploadBatches, type Role } from "#app/db/schema.ts";
import { createSession } from "#app/auth/session.server.ts";
import { createToken } from "#app/models/accounts/tokens.server.ts";
import { args, get, personWithSession, post, run, type Outcome } from "#tests/support/auth.ts";

const AUDIENCES = ["signed-out", "contributor", "reviewer", "modeller", "editor"] as const;
type Audience = (typeof AUDIENCES)[number];

/**
 * ok: 200 · sign-in: redirect to /sign-in?redirectTo=… · forbidden: 403 · unauthorized: 401 ·
 * allowed: past the access check (anything but sign-in, 401 or 403; for empty POSTs, which a
 * correct action answers with 400) · redirect:/x: redirect elsewhere · status:N: exactly N ·
 * none: the module has no loader/action.
 */
type Answer = "ok" | "sign-in" | "forbidden" | "unauthorized" | "allowed" | "none" | `redirect:${string}` | `status:${number}`;
type PerAudience = Answer | Record<Audience, Answer>;

type Row = {
  /** The URL to request; a `:name` segment is filled with the fixture that `params` names for it. */
  url: string;
  params?: Record<string, keyof Fixtures>;
  get: PerAudience;
  post: PerAudience;
  auth?: "cookie" | "token";
};

const signedIn = (answer: Answer): Record<Audience, Answer> => ({
  "signed-out": "sign-in",
  contributor: answer,
  reviewer: answer,
  modeller: answer,
  editor: answer,
});

const only = (roles: Role[], answer: Answer, signedOut: Answer = "sign-in", others: Answer = "forbidden") =>
  Object.fromEntries(
    AUDIENCES.map((a) => [a, a === "signed-out" ? signedOut : roles.includes(a as Role) ? answer : others]),
  ) as Record<Audience, Answer>;

const publicButSignedInGoesOn = (to: string): Record<Audience, Answer> => ({
  "signed-out": "ok",
  contributor: `redirect:${to}`,
  reviewer: `redirect:${to}`,
  modeller: `redirect:${to}`,
  editor: `redirect:${to}`,
});

export const ACCESS: Record<string, Row> = {
  root: { url: "/", get: "ok", post: "none" },
  "routes/home": { url: "/", get: "ok", post: "none" },
  // Sign-in, sign-out, account, people, outbox, token API (issue 4)
  "routes/account/sign-in": { url: "/sign-in", get: publicButSignedInGoesOn("/"), post: "allowed" },
  "routes/account/sign-in.link": { url: "/sign-in/link?t=x", get: publicButSignedInGoesOn("/"), post: "allowed" },
  "routes/account/sign-out": { url: "/sign-out", get: "redirect:/", post: "redirect:/" },
  "routes/account/account": { url: "/account", get: signedIn("ok"), post: signedIn("allowed") },
  "routes/admin/people": { url: "/people", get: only(["editor"], "ok"), post: only(["editor"], "allowed") },
  "routes/dev.outbox": { url: "/dev/outbox", get: "ok", post: "none" },
  "routes/api/v1/me": {
    url: "/api/v1/me",
    auth: "token",
    get: { ...signedIn("ok"), "signed-out": "unauthorized" },
    post: "none",
  },
  // Each area's layout checks the area's role before its pages' own checks.
  "routes/account/layout": { url: "/account", get: signedIn("ok"), post: "none" },
  "routes/explore/layout": { url: "/explore", get: signedIn("ok"), post: "none" },
  "routes/contribute/layout": { url: "/submissions", get: only(["contributor"], "ok"), post: "none" },
  "routes/admin/layout": { url: "/people", get: only(["editor"], "ok"), post: "none" },
  // Reading the registry: any signed-in person
  "routes/explore/explore": { url: "/explore", get: signedIn("ok"), post: "none" },
  "routes/explore/determination": {
    url: "/determinations/:id",
    params: { id: "determinationId" },
    get: signedIn("ok"),
    // Reopening a graded determination: editors
    post: only(["editor"], "allowed"),
  },
  "routes/explore/site": { url: "/sites/:id", params: { id: "siteId" }, get: signedIn("ok"), post: "none" },
  "routes/explore/map": { url: "/map", get: signedIn("ok"), post: "none" },
  "routes/resources/map-sites": { url: "/api/map-sites", get: { ...signedIn("ok"), "signed-out": "unauthorized" }, post: "none" },
  // Calibration: public (rate-limited per address)
  "routes/calibrate": { url: "/calibrate", get: "ok", post: "allowed" },
  "routes/resources/calibrate-csv": { url: "/calibrate/results.csv", get: "status:405", post: "allowed" },
  "routes/resources/calibrate-batch": { url: "/calibrate/batch", get: "status:405", post: "allowed" },
  "routes/resources/calibrate-file": { url: "/calibrate/file", get: "status:405", post: "allowed" },
  "routes/api/v1/calibrate": { url: "/api/v1/calibrate", get: "status:405", post: "allowed" },
  "routes/resources/curve-window": { url: "/api/curve-window?curve=intcal20&from=12500&to=11500", get: "ok", post: "none" },
  // Curves, checks and reconstructions, background jobs: editors (reviewers follow check runs: review-admin.test.ts)
  "routes/admin/curves": { url: "/curves", get: only(["editor"], "ok"), post: only(["editor"], "allowed") },
  "routes/admin/labs": { url: "/labs", get: only(["editor"], "ok"), post: only(["editor"], "allowed") },
  "routes/admin/publications": { url: "/publications", get: only(["editor"], "ok"), post: "none" },
  "routes/admin/publication": {
    url: "/publications/:id",
    params: { id: "publicationId" },
    get: only(["editor"], "ok"),
    post: only(["editor"], "allowed"),
  },
  "routes/admin/checks": { url: "/checks", get: only(["editor"], "ok"), post: only(["editor"], "allowed") },
  "routes/resources/jobs": {
    url: "/api/jobs/:id",
    params: { id: "jobId" },
    get: only(["editor"], "ok", "unauthorized"),
    post: "none",
  },
  // Submitting: contributors, on their own uploads and determinations (the fixtures belong to the matrix contributor)
  "routes/contribute/uploads": { url: "/uploads", get: only(["contributor"], "ok"), post: only(["contributor"], "allowed") },
  "routes/resources/upload-file": { url: "/uploads/file", get: "none", post: only(["contributor"], "allowed") },
  "routes/resources/upload-template-xlsx": { url: "/uploads/template.xlsx", get: only(["contributor"], "ok"), post: "none" },
  "routes/resources/upload-template-csv": { url: "/uploads/template.csv", get: only(["contributor"], "ok"), post: "none" },
  "routes/contribute/upload": {
    url: "/uploads/:publicId",
    params: { publicId: "uploadPublicId" },
    get: only(["contributor"], "ok"),
    post: only(["contributor"], "allowed"),
  },
  "routes/resources/upload-errors-csv": {
    url: "/uploads/:publicId/errors.csv",
    params: { publicId: "uploadPublicId" },
    get: only(["contributor"], "ok"),
    post: "none",
  },
  "routes/contribute/submit": { url: "/submit", get: only(["contributor"], "ok"), post: only(["contributor"], "allowed") },
  "routes/resources/determination-preview": {
    url: "/api/determination-preview",
    get: only(["contributor"], "status:405"),
    post: only(["contributor"], "allowed"),
  },
  "routes/resources/site-search": { url: "/api/site-search?q=a", get: only(["contributor"], "ok"), post: "none" },
  "routes/contribute/submissions": {
    url: "/submissions",
    get: only(["contributor"], "ok"),
    post: only(["contributor"], "allowed"),
  },
  // The fixture determination was submitted by the matrix contributor, so only they may edit it.
  "routes/contribute/submission-edit": {
    url: "/submissions/:id/edit",
    params: { id: "determinationId" },
    get: only(["contributor"], "ok"),
    post: only(["contributor"], "allowed"),
  },
  // Review (issue 9): the queue and the review page for reviewers; answers for contributors (own only, else 404)
  "routes/review/layout": { url: "/review", get: only(["reviewer"], "ok"), post: "none" },
  "routes/review/queue": { url: "/review", get: only(["reviewer"], "ok"), post: only(["reviewer"], "allowed") },
  "routes/review/item": {
    url: "/review/:id",
    params: { id: "determinationId" },
    get: only(["reviewer"], "ok"),
    post: only(["reviewer"], "allowed"),
  },
  "routes/contribute/submission-answer": {
    url: "/submissions/:id/answer",
    params: { id: "determinationId" },
    get: only(["contributor"], "allowed"),
    post: only(["contributor"], "allowed"),
  },
  // Documentation: public
  "routes/api-docs": { url: "/api-docs", get: "ok", post: "none" },
  // Contributors' API, by token
  "routes/api/v1/uploads": {
    url: "/api/v1/uploads",
    auth: "token",
    get: only(["contributor"], "status:405", "unauthorized"),
    post: only(["contributor"], "allowed", "unauthorized"),
  },
  "routes/api/v1/uploads.commit": {
    url: "/api/v1/uploads/:uploadId/commit",
    params: { uploadId: "uploadPublicId" },
    auth: "token",
    get: only(["contributor"], "status:405", "unauthorized"),
    post: only(["contributor"], "allowed", "unauthorized"),
  },
  // Constraint sets: anyone signed in reads and downloads (saving and publishing check their roles in the action)
  "routes/constraints/layout": { url: "/constraints", get: signedIn("ok"), post: "none" },
  "routes/constraints/constraints": { url: "/constraints", get: signedIn("ok"), post: signedIn("allowed") },
  "routes/resources/constraints-summary": {
    url: "/constraints/summary?min_grade=1",
    get: { ...signedIn("ok"), "signed-out": "unauthorized" },
    post: "none",
  },
  "routes/resources/constraints-download": { url: "/constraints/download?format=csv", get: signedIn("ok"), post: "none" },
  "routes/api/v1/constraints": {
    url: "/api/v1/constraints",
    auth: "token",
    get: { ...signedIn("ok"), "signed-out": "unauthorized" },
    post: { ...signedIn("allowed"), "signed-out": "unauthorized" },
  },
  // Releases: open data, public to read; publishing by token is for editors
  "routes/releases/layout": { url: "/releases", get: "none", post: "none" },
  "routes/releases/index": { url: "/releases", get: "ok", post: "none" },
  "routes/releases/release": { url: "/releases/:slug", params: { slug: "releaseSlug" }, get: "ok", post: "none" },
  "routes/api/v1/releases": {
    url: "/api/v1/releases",
    auth: "token",
    get: "ok",
    post: only(["editor"], "allowed", "unauthorized"),
  },
  "routes/api/v1/release": {
    url: "/api/v1/releases/:slug",
    params: { slug: "releaseSlug" },
    auth: "token",
    get: "ok",
    post: "none",
  },
  "routes/api/v1/determinations": {
    url: "/api/v1/determinations",
    auth: "token",
    get: { ...signedIn("ok"), "signed-out": "unauthorized" },
    post: only(["contributor"], "allowed", "unauthorized"),
  },
  // Review (issue 9)
  "routes/api/v1/determination": {
    url: "/api/v1/determinations/:id",
    params: { id: "determinationId" },
    auth: "token",
    get: { ...signedIn("ok"), "signed-out": "unauthorized" },
    post: "none",
  },
  "routes/api/v1/reviews": {
    url: "/api/v1/reviews",
    auth: "token",
    get: "none",
    post: only(["reviewer"], "allowed", "unauthorized"),
  },
  // Model runs pages and downloads: modellers (no fixture run or ensemble: past the check, a 404)
  "routes/runs/layout": { url: "/runs", get: only(["modeller"], "ok"), post: "none" },
  "routes/runs/runs": { url: "/runs", get: only(["modeller"], "ok"), post: only(["modeller"], "allowed") },
  "routes/runs/run": { url: "/runs/999999", get: only(["modeller"], "status:404"), post: only(["modeller"], "status:404") },
  "routes/runs/ensemble": { url: "/runs/ensembles/none", get: only(["modeller"], "status:404"), post: "none" },
  "routes/resources/model-run-file": { url: "/runs/999999/file", get: only(["modeller"], "status:404"), post: "none" },
  "routes/resources/model-run-margins": {
    url: "/runs/999999/margins.json",
    get: only(["modeller"], "status:404"),
    post: "none",
  },
  "routes/resources/ensemble-runs-csv": {
    url: "/runs/ensembles/none/runs.csv",
    get: only(["modeller"], "status:404"),
    post: "none",
  },
  "routes/resources/ensemble-scores-csv": {
    url: "/runs/ensembles/none/scores.csv",
    get: only(["modeller"], "status:404"),
    post: "none",
  },
  // Model runs: modellers, by token (no fixture run: past the check the answer is a 404)
  "routes/api/v1/model-runs": {
    url: "/api/v1/model-runs",
    auth: "token",
    get: only(["modeller"], "status:405", "unauthorized"),
    post: only(["modeller"], "allowed", "unauthorized"),
  },
  "routes/api/v1/model-run": {
    url: "/api/v1/model-runs/999999",
    auth: "token",
    get: only(["modeller"], "status:404", "unauthorized"),
    post: "none",
  },
  "routes/api/v1/ensemble": {
    url: "/api/v1/ensembles/no-such-ensemble",
    auth: "token",
    get: only(["modeller"], "status:404", "unauthorized"),
    post: "none",
  },
};

type Entry = { id: string; file: string; path: string };

function flatten(entries: RouteConfigEntry[], parentPath = ""): Entry[] {
  return entries.flatMap((e) => {
    const full = [parentPath, e.path ?? ""].filter(Boolean).join("/");
    const id = e.id ?? e.file.replace(/\.[jt]sx?$/, "");
    return [{ id, file: e.file, path: `/${full}` }, ...flatten(e.children ?? [], full)];
  });
}

const ENTRIES: Entry[] = [{ id: "root", file: "root.tsx", path: "/" }, ...flatten(routes)];

type Fixtures = {
  siteId: string;
  determinationId: string;
  jobId: string;
  uploadPublicId: string;
  releaseSlug: string;
  publicationId: string;
};
const fixtures = {} as Fixtures;
const people = {} as Record<Exclude<Audience, "signed-out">, { id: number; token: string }>;
let cookies = {} as Record<Exclude<Audience, "signed-out">, string>;

/** Fresh sessions for every route: the sign-out row ends the ones it is handed. */
async function freshSessions() {
  const next = {} as typeof cookies;
  for (const [role, p] of Object.entries(people) as [Exclude<Audience, "signed-out">, { id: number }][]) {
    next[role] = (await createSession(p.id, new Request("http://localhost/"))).cookie.split(";")[0]!;
  }
  cookies = next;
}

seedForFile(async () => {
  const db = getDb();
  for (const role of AUDIENCES.filter((a): a is Role => a !== "signed-out")) {
    const p = await personWithSession([role], { email: `matrix-${role}@example.org` });
    people[role] = { id: p.id, token: createToken(db, p.id, "matrix", { actorId: p.id }).token };
  }
  const lab = db.insert(labs).values({ name: "Matrix Test Laboratory", codePrefix: "ZZM", city: "Nowhere" }).returning().get();
  const site = db.insert(sites).values({ name: "Matrix Test Site", latitude: 58.5, longitude: -65.5 }).returning().get();
  const sample = db.insert(samples).values({ siteId: site.id, fieldCode: "ZZM-F1", material: "marine shell" }).returning().get();
  const det = db
    .insert(determinations)
    .values({
      sampleId: sample.id,
      labId: lab.id,
      contributorId: people.contributor.id,
      labCode: "ZZM-0001",
      method: "radiocarbon",
      constraintKind: "minimum",
      c14AgeYr: 9500,
      c14ErrorYr: 45,
    })
    .returning()
    .get();
  const job = db.insert(jobs).values({ kind: "recalibrate" }).returning().get();
  const upload = db
    .insert(uploadBatches)
    .values({
      publicId: "matrix-upload-0001",
      userId: people.contributor.id,
      fileName: "matrix.csv",
      fileKind: "csv",
      fileSizeBytes: 10,
    })
    .returning()
    .get();
  const release = db
    .insert(releases)
    .values({
      slug: "matrix-release-v1",
      name: "Matrix release",
      filter: {},
      curveVersions: [],
      itemCount: 0,
      checksum: "0".repeat(64),
      createdBy: people.editor.id,
      publishedAt: new Date(),
    })
    .returning()
    .get();
  const publication = db
    .insert(publications)
    .values({ citation: "Matrix, A. (2020) An invented paper. Journal of Tests 1, 1–2.", doi: "10.99999/matrix.1" })
    .returning()
    .get();
  Object.assign(fixtures, {
    publicationId: String(publication.id),
    releaseSlug: release.slug,
    siteId: String(site.id),
    determinationId: String(det.id),
    jobId: String(job.id),
    uploadPublicId: upload.publicId,
  });
});

function fill(row: Row): { url: string; params: Record<string, string> } {
  const params: Record<string, string> = {};
  const url = row.url.replace(/:(\w+)/g, (_, name: string) => {
    const fixture = row.params?.[name];
    if (!fixture) throw new Error(`The row for ${row.url} names no fixture for :${name}`);
    params[name] = fixtures[fixture];
    return encodeURIComponent(fixtures[fixture]);
  });
  return { url, params };
}

function requestFor(row: Row, audience: Audience, method: "GET" | "POST"): Request {
  const { url } = fill(row);
  const headers: Record<string, string> = {};
  let cookie: string | undefined;
  if (audience !== "signed-out") {
    if (row.auth === "token") headers.Authorization = `Bearer ${people[audience].token}`;
    else cookie = cookies[audience];
  }
  return method === "GET" ? get(url, { cookie, headers }) : post(url, {}, { cookie, headers });
}

function describeOutcome(o: Outcome): string {
  if (o.location) return `${o.status} → ${o.location}`;
  return String(o.status);
}

function matches(answer: Answer, o: Outcome): boolean {
  const toSignIn = o.status >= 300 && o.status < 400 && (o.location ?? "").startsWith("/sign-in?redirectTo=");
  switch (answer) {
    case "ok":
      return o.status === 200;
    case "sign-in":
      return toSignIn;
    case "forbidden":
      return o.status === 403;
    case "unauthorized":
      return o.status === 401;
    case "allowed":
      return !toSignIn && o.status !== 401 && o.status !== 403 && o.status < 500;
    case "none":
      return false;
    default:
      if (answer.startsWith("redirect:"))
        return o.status >= 300 && o.status < 400 && o.location === answer.slice("redirect:".length);
      return o.status === Number(answer.slice("status:".length));
  }
}

const answerFor = (cell: PerAudience, audience: Audience): Answer => (typeof cell === "string" ? cell : cell[audience]);

describe("access matrix", () => {
  it("has a row for every route that exists, and no row for a route that does not", () => {
    const ids = ENTRIES.map((e) => e.id);
    expect(
      ids.filter((id) => !(id in ACCESS)),
      "routes without an access decision",
    ).toEqual([]);
    expect(
      Object.keys(ACCESS).filter((id) => !ids.includes(id)),
      "rows for routes that no longer exist",
    ).toEqual([]);
  });

  for (const entry of ENTRIES) {
    const row = ACCESS[entry.id];
    if (!row) continue;
    it(`${entry.id} (${entry.path}) answers each audience as its row says`, async () => {
      const mod = (await import(/* @vite-ignore */ path.resolve("app", entry.file))) as {
        loader?: (a: unknown) => unknown;
        action?: (a: unknown) => unknown;
      };
      const { params } = fill(row);
      await freshSessions();
      const problems: string[] = [];
      for (const [method, cell, fn] of [
        ["GET", row.get, mod.loader],
        ["POST", row.post, mod.action],
      ] as const) {
        const declaredNone = AUDIENCES.every((a) => answerFor(cell, a) === "none");
        if (!fn) {
          if (!declaredNone)
            problems.push(`${method}: the row expects answers but the module has no ${method === "GET" ? "loader" : "action"}`);
          continue;
        }
        if (declaredNone) {
          problems.push(`${method}: the module has a ${method === "GET" ? "loader" : "action"} but the row says none`);
          continue;
        }
        for (const audience of AUDIENCES) {
          const expected = answerFor(cell, audience);
          const outcome = await run(() => fn(args(requestFor(row, audience, method), params)));
          if (!matches(expected, outcome))
            problems.push(`${method} as ${audience}: expected ${expected}, got ${describeOutcome(outcome)}`);
        }
      }
      expect(problems).toEqual([]);
    });
  }
});

/*
 * Issue 14, case 12: no GET writes (or waits for a writer). Every loader is run again for every
 * audience with the app pointed at a read-only connection to its database, as with the file at
 * mode 444: a loader that writes anything fails there instead of answering as its row says.
 */
describe("every GET answers the same on a read-only database", () => {
  for (const entry of ENTRIES) {
    const row = ACCESS[entry.id];
    if (!row || AUDIENCES.every((a) => answerFor(row.get, a) === "none")) continue;
    it(`${entry.id} (${entry.path})`, async () => {
      const mod = (await import(/* @vite-ignore */ path.resolve("app", entry.file))) as { loader?: (a: unknown) => unknown };
      if (!mod.loader) return;
      const { params } = fill(row);
      await freshSessions();
      const writable = getDb();
      const readOnly = new Database(writable.$client.name, { readonly: true, fileMustExist: true });
      setDb(drizzle(readOnly, { schema }) as Db);
      const problems: string[] = [];
      try {
        for (const audience of AUDIENCES) {
          const expected = answerFor(row.get, audience);
          const outcome = await run(() => mod.loader!(args(requestFor(row, audience, "GET"), params))).catch(
            (e: unknown) => ({ status: 0, location: null, error: String(e) }) as Outcome & { error: string },
          );
          if (!matches(expected, outcome))
            problems.push(
              `GET as ${audience}: expected ${expected}, got ${"error" in outcome ? outcome.error : describeOutcome(outcome)}`,
            );
        }
      } finally {
        setDb(writable);
        readOnly.close();
      }
      expect(problems).toEqual([]);
    });
  }
});

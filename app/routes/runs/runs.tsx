import { Form, Link, useActionData, useNavigation } from "react-router";
import type { Route } from "./+types/runs";
import { formatCount } from "#app/utils/age-format.ts";
import { requireRole } from "#app/auth/session.server.ts";
import { ErrorView } from "#app/components/error-view.tsx";
import { fmt, RunStatus, usePollWhile } from "#app/components/runs/run-status.tsx";
import { JobProgress } from "#app/components/ui/job-progress.tsx";
import { getDb } from "#app/db/client.server.ts";
import { getJob, type JobView } from "#app/models/jobs.server.ts";
import { UnknownReleaseError } from "#app/models/model-runs/constraints.server.ts";
import { IntakeError, intakeRuns, modelRunMaxBytes, withReceivedRuns } from "#app/models/model-runs/intake.server.ts";
import { startScoring } from "#app/models/model-runs/runs.server.ts";
import { listRuns } from "#app/models/model-runs/views.server.ts";
import { redirectWithFlash } from "#app/utils/flash.server.ts";
import { data } from "react-router";

export const meta: Route.MetaFunction = () => [{ title: "Model runs · Thawline" }];

export async function loader({ request }: Route.LoaderArgs) {
  const user = await requireRole(request, "modeller");
  const db = getDb();
  const rows = listRuns(db, user.id);
  // The scoring jobs of this modeller's runs under way or finished in the last two minutes.
  const jobIds = [...new Set(rows.filter((r) => r.run.userId === user.id && r.run.jobId).map((r) => r.run.jobId!))].slice(0, 20);
  const recent = Date.now() - 120_000;
  const jobs: JobView[] = [];
  for (const id of jobIds) {
    const j = getJob(db, id);
    if (j && (j.finishedAt === null || j.finishedAt > recent)) jobs.push(j);
  }
  return {
    jobs,
    runs: rows.map((r) => ({
      id: r.run.id,
      name: r.run.name,
      ensemble: r.run.ensemble,
      status: r.run.status,
      error: r.run.error,
      logL: r.run.totalLogLikelihood,
      n: r.run.nConstraints,
      ruledOut: r.run.ruledOut,
      progress: r.progress,
      total: r.total,
      waiting: r.run.timeMapping !== null,
      fileName: r.run.fileName,
    })),
    maxMb: Math.round(modelRunMaxBytes() / 1048576),
  };
}

const num = (form: URLSearchParams, key: string) => {
  const v = (form.get(key) ?? "").trim();
  if (!v) return null;
  const n = Number(v);
  if (!Number.isFinite(n)) throw new IntakeError(`${key.replace("_", " ")} must be a number.`);
  return n;
};

export async function action({ request }: Route.ActionArgs) {
  const user = await requireRole(request, "modeller");
  const db = getDb();
  try {
    const runs = await withReceivedRuns(
      request,
      { maxFiles: 200, parametersCsv: true },
      ({ runs: files, parametersCsv, fields: form }) => {
        if (form.get("intent") !== "upload") throw new IntakeError("Unknown intent.");
        return intakeRuns(db, files, {
          userId: user.id,
          ensemble: (form.get("ensemble") ?? "").trim().slice(0, 200) || null,
          parametersCsv,
          timeOffset: num(form, "time_offset"),
          thresholdM: num(form, "threshold"),
          tolerance: num(form, "tolerance"),
          choice: { releaseSlug: (form.get("release") ?? "").trim() || null },
          keepUnmapped: true,
        });
      },
    );
    startScoring(
      db,
      runs.map((r) => r.id),
      user.id,
    );
    const waiting = runs.filter((r) => r.timeMapping);
    const queued = runs.length - waiting.length;
    const parts = [];
    if (queued) parts.push(`${queued} run${queued === 1 ? "" : "s"} queued for scoring.`);
    if (waiting.length)
      parts.push(
        `${waiting.length} run${waiting.length === 1 ? " needs" : "s need"} a time mapping: state how model time maps to cal BP on the run's page.`,
      );
    return redirectWithFlash(waiting.length === 1 && runs.length === 1 ? `/runs/${waiting[0].id}` : "/runs", {
      kind: "success",
      message: parts.join(" "),
    });
  } catch (e) {
    if (e instanceof IntakeError) {
      const needsOffset = e.problems.some((p) => p.code === "time-mapping-needed");
      return data({ error: e.message, problems: e.problems, needsOffset }, { status: e.status });
    }
    if (e instanceof UnknownReleaseError) return data({ error: e.message, problems: [], needsOffset: false }, { status: 400 });
    throw e;
  }
}

export default function Runs({ loaderData }: Route.ComponentProps) {
  const { runs, maxMb, jobs } = loaderData;
  const result = useActionData<typeof action>();
  const busy = useNavigation().state === "submitting";
  usePollWhile(runs.some((r) => !r.waiting && (r.status === "queued" || r.status === "running")));
  const ensembles = [...new Set(runs.map((r) => r.ensemble).filter((e): e is string => !!e))];
  return (
    <div className="space-y-10">
      <header>
        <h1>Model runs</h1>
        <p className="mt-2 max-w-3xl text-muted">
          Score ice-sheet model runs against the registry&apos;s constraints with a graded likelihood: each date gets a score
          between 0 and 1 and a history-matching implausibility, each run a total log-likelihood that tolerates a few bad dates.
          Upload a NetCDF file (CF conventions: time, lat/lon or projected x/y with a grid mapping, ice thickness or an ice mask)
          or GeoJSON margins with an <code>age_cal_bp</code> per extent. For hundreds of large runs, score them where they live
          with <code>npm run score</code>.
        </p>
      </header>

      <section aria-labelledby="upload" className="card space-y-4">
        <h2 id="upload">Upload runs</h2>
        <Form method="post" encType="multipart/form-data" className="grid gap-4 md:grid-cols-2" data-testid="run-upload">
          <input type="hidden" name="intent" value="upload" />
          <label className="block md:col-span-2">
            <span className="font-semibold">Run files</span>{" "}
            <span className="text-sm text-muted">(one or many; up to {maxMb} MB each)</span>
            <input type="file" name="file" multiple accept=".nc,.nc4,.geojson,.json" required className="mt-1 block" />
          </label>
          <label className="block">
            <span className="font-semibold">Ensemble</span>{" "}
            <span className="text-sm text-muted">(optional name grouping the runs)</span>
            <input type="text" name="ensemble" maxLength={200} className="input mt-1 block w-full" />
          </label>
          <label className="block">
            <span className="font-semibold">Parameters CSV</span>{" "}
            <span className="text-sm text-muted">
              (optional: a <code>run</code> column naming each file, then one column per parameter)
            </span>
            <input type="file" name="parameters_csv" accept=".csv,text/csv" className="mt-1 block" />
          </label>
          <label className="block">
            <span className="font-semibold">Release</span>{" "}
            <span className="text-sm text-muted">(slug; empty: every determination graded 2 or 3)</span>
            <input type="text" name="release" maxLength={200} className="input mt-1 block w-full" />
          </label>
          <label className="block">
            <span className="font-semibold">Time offset</span>{" "}
            <span className="text-sm text-muted">(cal BP of model time 0, only when the time units do not say)</span>
            <input
              type="number"
              name="time_offset"
              step="any"
              className="input mt-1 block w-full"
              aria-invalid={result?.needsOffset || undefined}
              autoFocus={result?.needsOffset}
            />
          </label>
          <label className="block">
            <span className="font-semibold">Ice threshold</span>{" "}
            <span className="text-sm text-muted">(m of ice thickness; default 1)</span>
            <input type="number" name="threshold" step="any" min="0" className="input mt-1 block w-full" />
          </label>
          <label className="block">
            <span className="font-semibold">Tolerance</span>{" "}
            <span className="text-sm text-muted">(grid cells around a site, default 1; km for margins, default 0)</span>
            <input type="number" name="tolerance" step="any" min="0" className="input mt-1 block w-full" />
          </label>
          {result?.error ? (
            <div role="alert" className="md:col-span-2" data-testid="run-upload-error">
              <p className="font-semibold">Nothing was kept.</p>
              {result.problems.length ? (
                <ul className="list-disc pl-5">
                  {result.problems.map((p) => (
                    <li key={p.file}>
                      <strong>{p.file}</strong>: {p.message}
                    </li>
                  ))}
                </ul>
              ) : (
                <p>{result.error}</p>
              )}
              {result.needsOffset ? <p>Give the time offset above and upload again.</p> : null}
            </div>
          ) : null}
          <div className="md:col-span-2">
            <button type="submit" className="btn" disabled={busy}>
              {busy ? "Checking files…" : "Upload and score"}
            </button>
          </div>
        </Form>
      </section>

      {jobs.length ? (
        <section aria-labelledby="scoring" className="space-y-3">
          <h2 id="scoring">Scoring</h2>
          {jobs.map((job) => (
            <JobProgress key={job.id} job={job} unit="time slices" label="Scoring runs" />
          ))}
        </section>
      ) : null}

      {ensembles.length ? (
        <section aria-labelledby="ensembles">
          <h2 id="ensembles">Ensembles</h2>
          <ul className="mt-2 list-disc pl-5">
            {ensembles.map((e) => (
              <li key={e}>
                <Link to={`/runs/ensembles/${encodeURIComponent(e)}`}>{e}</Link> — ranking, log L against each parameter, CSV
                downloads
              </li>
            ))}
          </ul>
        </section>
      ) : null}

      <section aria-labelledby="list">
        <h2 id="list">Runs</h2>
        {runs.length === 0 ? (
          <p className="card mt-4 text-muted">No runs yet. Upload a file above.</p>
        ) : (
          <div className="mt-4 overflow-x-auto">
            <table className="data-table" data-testid="runs-table">
              <thead>
                <tr>
                  <th scope="col">Run</th>
                  <th scope="col">Ensemble</th>
                  <th scope="col">State</th>
                  <th scope="col" className="text-right">
                    log L
                  </th>
                  <th scope="col" className="text-right">
                    Constraints
                  </th>
                  <th scope="col">History matching</th>
                </tr>
              </thead>
              <tbody>
                {runs.map((r) => (
                  <tr key={r.id}>
                    <td>
                      <Link to={`/runs/${r.id}`}>{r.name}</Link>
                    </td>
                    <td>
                      {r.ensemble ? <Link to={`/runs/ensembles/${encodeURIComponent(r.ensemble)}`}>{r.ensemble}</Link> : "—"}
                    </td>
                    <td>
                      {r.waiting ? (
                        <Link to={`/runs/${r.id}`}>needs a time mapping</Link>
                      ) : (
                        <RunStatus status={r.status} progress={r.progress} total={r.total} error={r.error} />
                      )}
                    </td>
                    <td className="text-right tabular-nums">{fmt(r.logL)}</td>
                    <td className="text-right tabular-nums">{r.n == null ? "—" : formatCount(r.n)}</td>
                    <td>{r.ruledOut === null ? "—" : r.ruledOut ? "ruled out" : "not ruled out"}</td>
                  </tr>
                ))}
              </tbody>
            </table>
          </div>
        )}
      </section>
    </div>
  );
}

export function ErrorBoundary({ error }: Route.ErrorBoundaryProps) {
  return <ErrorView error={error} />;
}

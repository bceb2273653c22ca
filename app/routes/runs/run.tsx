import { Link } from "react-router";
import type { Route } from "./+types/run";
import { requireRole } from "#app/auth/session.server.ts";
import { ErrorView } from "#app/components/error-view.tsx";
import { GradeBadge } from "#app/components/grade-badge.tsx";
import { fmt, RunStatus, usePollWhile } from "#app/components/runs/run-status.tsx";
import { getDb } from "#app/db/client.server.ts";
import { getRun, worstConstraints } from "#app/models/model-runs/views.server.ts";
import { jobs } from "#app/db/schema.ts";
import { eq } from "drizzle-orm";
import { notFound } from "#app/utils/http.server.ts";

export const meta: Route.MetaFunction = () => [{ title: "Model run · Thawline" }];

export async function loader({ request, params }: Route.LoaderArgs) {
  await requireRole(request, "modeller");
  const db = getDb();
  const run = getRun(db, Number(params.id));
  if (!run) notFound("No such model run.");
  const job = run.jobId ? db.select().from(jobs).where(eq(jobs.id, run.jobId)).get() : undefined;
  return {
    run,
    job: job ? { progress: job.progress, total: job.total } : null,
    worst: run.status === "scored" ? worstConstraints(db, run.id) : [],
  };
}

export default function RunPage({ loaderData }: Route.ComponentProps) {
  const { run, job, worst } = loaderData;
  usePollWhile(run.status === "queued" || run.status === "running");
  const summary = (run.summary ?? {}) as {
    span?: { oldest: number; youngest: number };
    timeStepYears?: number;
    nOutsideSpan?: number;
    nOffDomain?: number;
    nImplausible?: number;
  };
  return (
    <div className="space-y-8">
      <header>
        <p className="text-sm">
          <Link to="/runs">Model runs</Link>
          {run.ensemble ? (
            <>
              {" · "}
              <Link to={`/runs/ensembles/${encodeURIComponent(run.ensemble)}`}>ensemble {run.ensemble}</Link>
            </>
          ) : null}
        </p>
        <h1>{run.name}</h1>
        <p className="mt-2">
          <RunStatus status={run.status} progress={job?.progress ?? null} total={job?.total ?? null} error={run.error} />
        </p>
        {run.storedPath ? (
          <p className="mt-2 text-sm">
            <a href={`/runs/${run.id}/file`} download>
              Download the run file ({run.fileName})
            </a>
          </p>
        ) : null}
      </header>
      {run.status === "scored" ? (
        <>
          <dl className="card grid gap-4 sm:grid-cols-3" data-testid="run-totals">
            <div>
              <dt className="text-sm text-muted">Total log L</dt>
              <dd className="text-2xl tabular-nums">{fmt(run.totalLogLikelihood, 1)}</dd>
            </div>
            <div>
              <dt className="text-sm text-muted">Constraints used</dt>
              <dd className="text-2xl tabular-nums">{run.nConstraints}</dd>
            </div>
            <div>
              <dt className="text-sm text-muted">Share with score ≥ 0.5</dt>
              <dd className="text-2xl tabular-nums">{fmt((run.shareAgreeing ?? 0) * 100, 1)} %</dd>
            </div>
            <div>
              <dt className="text-sm text-muted">Largest / second implausibility</dt>
              <dd className="tabular-nums">
                {fmt(run.maxImplausibility, 2)} / {fmt(run.secondImplausibility, 2)} ({summary.nImplausible ?? 0} above 3) —{" "}
                {run.ruledOut ? <strong>ruled out</strong> : "not ruled out"}
              </dd>
            </div>
            <div>
              <dt className="text-sm text-muted">Run span and step</dt>
              <dd className="tabular-nums">
                {summary.span
                  ? `${Math.round(summary.span.oldest).toLocaleString("en")}–${Math.round(summary.span.youngest).toLocaleString("en")} cal BP`
                  : "—"}
                , every {summary.timeStepYears ?? "—"} years
              </dd>
            </div>
            <div>
              <dt className="text-sm text-muted">Outside the span / off the grid</dt>
              <dd className="tabular-nums">
                {summary.nOutsideSpan ?? 0} (scored ½) / {summary.nOffDomain ?? 0} (not counted)
              </dd>
            </div>
          </dl>
          <section aria-labelledby="worst">
            <h2 id="worst">Worst-fitting constraints</h2>
            <div className="mt-4 overflow-x-auto">
              <table className="data-table" data-testid="worst-constraints">
                <thead>
                  <tr>
                    <th scope="col">Determination</th>
                    <th scope="col">Site</th>
                    <th scope="col">Kind</th>
                    <th scope="col">Grade</th>
                    <th scope="col" className="text-right">
                      Median (cal BP)
                    </th>
                    <th scope="col" className="text-right">
                      Run deglaciates (cal BP)
                    </th>
                    <th scope="col" className="text-right">
                      Score
                    </th>
                    <th scope="col" className="text-right">
                      Implausibility
                    </th>
                  </tr>
                </thead>
                <tbody>
                  {worst.map((w) => (
                    <tr key={w.id}>
                      <td>
                        <Link to={`/determinations/${w.id}`}>{w.labCode}</Link>
                      </td>
                      <td>{w.site}</td>
                      <td>{w.kind}</td>
                      <td>
                        <GradeBadge grade={w.grade} />
                      </td>
                      <td className="text-right tabular-nums">
                        {w.medianCalBp === null ? "—" : Math.round(w.medianCalBp).toLocaleString("en")}
                      </td>
                      <td className="text-right tabular-nums">{Math.round(w.modelCalBp).toLocaleString("en")}</td>
                      <td className="text-right tabular-nums">{fmt(w.score, 3)}</td>
                      <td className="text-right tabular-nums">{fmt(w.implausibility, 2)}</td>
                    </tr>
                  ))}
                </tbody>
              </table>
            </div>
          </section>
        </>
      ) : null}
    </div>
  );
}

export function ErrorBoundary({ error }: Route.ErrorBoundaryProps) {
  return <ErrorView error={error} />;
}

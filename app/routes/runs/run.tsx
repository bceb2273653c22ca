import { parseWithZod } from "@conform-to/zod/v4";
import { data, Link, useActionData } from "react-router";
import type { Route } from "./+types/run";
import { formatCount } from "#app/utils/age-format.ts";
import { requireRole } from "#app/auth/session.server.ts";
import { ErrorView } from "#app/components/error-view.tsx";
import { GradeBadge } from "#app/components/grade-badge.tsx";
import { RunMapSection } from "#app/components/runs/run-map-section.tsx";
import { fmt, RunStatus, usePollWhile } from "#app/components/runs/run-status.tsx";
import { TimeMappingStep } from "#app/components/runs/time-mapping-step.tsx";
import { JobProgress } from "#app/components/ui/job-progress.tsx";
import { getDb } from "#app/db/client.server.ts";
import { getJob } from "#app/models/jobs.server.ts";
import { stateTimeOffset, waitingRuns } from "#app/models/model-runs/time-mapping.server.ts";
import { getRun, runSiteScores, worstConstraints } from "#app/models/model-runs/views.server.ts";
import { redirectWithFlash } from "#app/utils/flash.server.ts";
import { notFound } from "#app/utils/http.server.ts";
import { CONSTRAINT_KIND_LABELS } from "#app/utils/labels.ts";
import { TimeOffsetSchema } from "#app/utils/time-offset.ts";

export const meta: Route.MetaFunction = ({ data }) => [{ title: `${data?.run.name ?? "Model run"} · Thawline` }];

export async function loader({ request, params }: Route.LoaderArgs) {
  const user = await requireRole(request, "modeller");
  const db = getDb();
  const run = getRun(db, Number(params.id));
  if (!run) notFound("No such model run.");
  const job = run.jobId ? getJob(db, run.jobId) : null;
  const scored = run.status === "scored";
  return {
    run,
    job,
    worst: scored ? worstConstraints(db, run.id) : [],
    sites: scored ? runSiteScores(db, run.id) : [],
    // Only the modeller who uploaded a waiting run states its offset.
    waitingOthers: run.timeMapping && run.userId === user.id ? waitingRuns(db, run, true).length - 1 : null,
  };
}

export async function action({ request, params }: Route.ActionArgs) {
  const user = await requireRole(request, "modeller");
  const db = getDb();
  const run = getRun(db, Number(params.id));
  if (!run) notFound("No such model run.");
  if (run.userId !== user.id)
    throw new Response("Only the modeller who uploaded this run can state its time mapping.", { status: 403 });
  const form = await request.formData();
  const submission = parseWithZod(form, { schema: TimeOffsetSchema });
  if (form.get("intent") !== "time-offset")
    return data({ result: submission.reply({ formErrors: ["Unknown intent."] }) }, { status: 400 });
  if (submission.status !== "success") return data({ result: submission.reply() }, { status: 400 });
  if (!run.timeMapping)
    return data({ result: submission.reply({ formErrors: ["This run's time mapping is already set."] }) }, { status: 409 });
  const { time_offset: offset, whole_ensemble: whole } = submission.value;
  const outcome = await stateTimeOffset(db, waitingRuns(db, run, whole), offset, user.id);
  const own = outcome.problems.find((p) => p.id === run.id);
  if (own) return data({ result: submission.reply({ fieldErrors: { time_offset: [own.message] } }) }, { status: 400 });
  const n = outcome.queued.length;
  const others = outcome.problems.map((p) => `${p.name}: ${p.message}`);
  return redirectWithFlash(`/runs/${run.id}`, {
    kind: others.length ? "info" : "success",
    message:
      `Model time 0 is ${offset.toLocaleString("en")} cal BP: ${n} run${n === 1 ? "" : "s"} queued for scoring.` +
      (others.length ? ` Still waiting: ${others.join(" ")}` : ""),
  });
}

export default function RunPage({ loaderData }: Route.ComponentProps) {
  const { run, job, worst, sites, waitingOthers } = loaderData;
  const acted = useActionData<typeof action>();
  const active = !run.timeMapping && (run.status === "queued" || run.status === "running");
  // The job may score several runs; the page follows this run's own state.
  usePollWhile(active);
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
        {run.timeMapping ? (
          <p className="mt-2">Waiting for its time mapping: not scored yet.</p>
        ) : active && job ? null : (
          <p className="mt-2">
            <RunStatus status={run.status} progress={null} total={null} error={run.error} />
          </p>
        )}
        {run.storedPath ? (
          <p className="mt-2 text-sm">
            <a href={`/runs/${run.id}/file`} download>
              Download the run file ({run.fileName})
            </a>
          </p>
        ) : null}
      </header>
      {active && job ? <JobProgress job={job} unit="time slices" label="Scoring" /> : null}
      {run.timeMapping ? (
        waitingOthers === null ? (
          <p className="card">The modeller who uploaded this run has not yet said how its model time maps to cal BP.</p>
        ) : (
          <TimeMappingStep mapping={run.timeMapping} others={waitingOthers} lastResult={acted?.result} />
        )
      ) : null}
      {run.status === "scored" ? (
        <>
          <dl className="card grid gap-4 sm:grid-cols-3" data-testid="run-totals">
            <div>
              <dt className="text-sm text-muted">Total log L</dt>
              <dd className="text-2xl tabular-nums">{fmt(run.totalLogLikelihood, 1)}</dd>
            </div>
            <div>
              <dt className="text-sm text-muted">Constraints used</dt>
              <dd className="text-2xl tabular-nums">{run.nConstraints == null ? "—" : formatCount(run.nConstraints)}</dd>
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
          <RunMapSection runId={run.id} sites={sites} />
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
                      <td>{CONSTRAINT_KIND_LABELS[w.kind] ?? w.kind}</td>
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

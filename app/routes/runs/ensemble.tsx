import { Link } from "react-router";
import type { Route } from "./+types/ensemble";
import { formatCount } from "#app/utils/age-format.ts";
import { requireRole } from "#app/auth/session.server.ts";
import { ErrorView } from "#app/components/error-view.tsx";
import { ParameterPlot } from "#app/components/runs/parameter-plot.tsx";
import { fmt, RunStatus, usePollWhile } from "#app/components/runs/run-status.tsx";
import { getDb } from "#app/db/client.server.ts";
import { IMPLAUSIBILITY_CUTOFF } from "#app/science/scoring/likelihood.ts";
import { ensembleRuns, identifiability, parameterNames } from "#app/models/model-runs/views.server.ts";
import { notFound } from "#app/utils/http.server.ts";

export const meta: Route.MetaFunction = ({ params }) => [{ title: `Ensemble ${params.name} · Thawline` }];

export async function loader({ request, params }: Route.LoaderArgs) {
  await requireRole(request, "modeller");
  const db = getDb();
  const runs = ensembleRuns(db, params.name);
  if (!runs.length) notFound("No ensemble of that name.");
  const scored = runs.filter((r) => r.status === "scored");
  return {
    name: params.name,
    parameters: parameterNames(runs),
    runs: runs.map((r) => ({
      id: r.id,
      name: r.name,
      status: r.status,
      error: r.error,
      parameters: r.parameters ?? {},
      logL: r.totalLogLikelihood,
      n: r.nConstraints,
      share: r.shareAgreeing,
      maxI: r.maxImplausibility,
      secondI: r.secondImplausibility,
      nImplausible: (r.summary?.nImplausible as number | undefined) ?? null,
      ruledOut: r.ruledOut,
    })),
    identify: identifiability(
      db,
      scored.map((r) => r.id),
    ),
  };
}

const KIND_SAYS: Record<string, string> = {
  minimum: "catch runs that free the ground too late (they cannot penalise a run that deglaciates too early)",
  maximum: "catch runs whose ice arrives too early — only where the run covers the time before the advance",
  direct: "catch both too early and too late deglaciation",
};

export default function Ensemble({ loaderData }: Route.ComponentProps) {
  const { name, parameters, runs, identify } = loaderData;
  usePollWhile(runs.some((r) => r.status === "queued" || r.status === "running"));
  const scored = runs.filter((r) => r.status === "scored" && r.logL !== null);
  let rank = 0;
  return (
    <div className="space-y-10">
      <header>
        <p className="text-sm">
          <Link to="/runs">Model runs</Link>
        </p>
        <h1>Ensemble {name}</h1>
        <p className="mt-2 max-w-3xl text-muted">
          Runs ranked by total log-likelihood. A run is ruled out when more of its constraints lie beyond an implausibility of{" "}
          {IMPLAUSIBILITY_CUTOFF} than the three-sigma rule allows for any unimodal error (4/81 of them).
        </p>
        <p className="mt-3 flex flex-wrap gap-4">
          <a href={`/runs/ensembles/${encodeURIComponent(name)}/runs.csv`} download className="btn">
            Runs CSV for emulator training
          </a>
          <a href={`/runs/ensembles/${encodeURIComponent(name)}/scores.csv`} download className="btn-quiet">
            Per-constraint scores CSV
          </a>
        </p>
      </header>
      <section aria-labelledby="ranking">
        <h2 id="ranking">Ranking</h2>
        <div className="mt-4 overflow-x-auto">
          <table className="data-table" data-testid="ensemble-ranking">
            <thead>
              <tr>
                <th scope="col" className="text-right">
                  Rank
                </th>
                <th scope="col">Run</th>
                {parameters.map((p) => (
                  <th key={p} scope="col" className="text-right">
                    {p}
                  </th>
                ))}
                <th scope="col" className="text-right">
                  log L
                </th>
                <th scope="col" className="text-right">
                  Constraints
                </th>
                <th scope="col" className="text-right">
                  Score ≥ 0.5
                </th>
                <th scope="col" className="text-right">
                  Max I
                </th>
                <th scope="col" className="text-right">
                  Second I
                </th>
                <th scope="col" className="text-right">
                  I &gt; 3
                </th>
                <th scope="col">History matching</th>
              </tr>
            </thead>
            <tbody>
              {runs.map((r) => (
                <tr key={r.id} className={r.ruledOut ? "text-muted" : undefined}>
                  <td className="text-right tabular-nums">{r.status === "scored" ? ++rank : "—"}</td>
                  <td>
                    <Link to={`/runs/${r.id}`}>{r.name}</Link>
                  </td>
                  {parameters.map((p) => (
                    <td key={p} className="text-right tabular-nums">
                      {String(r.parameters[p] ?? "—")}
                    </td>
                  ))}
                  <td className="text-right tabular-nums">
                    {r.status === "scored" ? (
                      fmt(r.logL)
                    ) : (
                      <RunStatus status={r.status} progress={null} total={null} error={r.error} />
                    )}
                  </td>
                  <td className="text-right tabular-nums">{r.n == null ? "—" : formatCount(r.n)}</td>
                  <td className="text-right tabular-nums">{r.share === null ? "—" : `${fmt(r.share * 100, 1)} %`}</td>
                  <td className="text-right tabular-nums">{fmt(r.maxI, 2)}</td>
                  <td className="text-right tabular-nums">{fmt(r.secondI, 2)}</td>
                  <td className="text-right tabular-nums">{r.nImplausible ?? "—"}</td>
                  <td>{r.ruledOut === null ? "—" : r.ruledOut ? <strong>ruled out</strong> : "not ruled out"}</td>
                </tr>
              ))}
            </tbody>
          </table>
        </div>
      </section>
      {scored.length > 1 && parameters.length ? (
        <section aria-labelledby="plots">
          <h2 id="plots">log L against each parameter</h2>
          <div className="mt-4 grid gap-6 md:grid-cols-2">
            {parameters.map((p) => {
              const points = scored
                .filter((r) => typeof r.parameters[p] === "number")
                .map((r) => ({ name: r.name, x: r.parameters[p] as number, y: r.logL!, ruledOut: !!r.ruledOut }));
              return points.length > 1 ? <ParameterPlot key={p} parameter={p} points={points} /> : null;
            })}
          </div>
        </section>
      ) : null}
      <section aria-labelledby="identify">
        <h2 id="identify">What the constraints can tell apart</h2>
        {identify.length === 0 ? (
          <p className="mt-2 text-muted">No scored runs yet.</p>
        ) : (
          <ul className="mt-2 list-disc space-y-1 pl-5" data-testid="identifiability">
            {identify.map((k) => (
              <li key={k.kind}>
                <strong>
                  {k.n.toLocaleString("en")} {k.kind}-limiting dates
                </strong>{" "}
                {KIND_SAYS[k.kind] ?? ""}; {k.informative.toLocaleString("en")} of them score differently (by more than 0.2)
                across these runs.
              </li>
            ))}
            {!identify.some((k) => k.kind === "direct") ? (
              <li>
                No direct dates: a run that deglaciates too early is caught only by maximum-limiting dates, so early biases are
                identified less well than late ones.
              </li>
            ) : null}
            <li>
              A date outside a run&apos;s time span is scored as uninformative (ice-free share ½) in every run, so totals stay
              comparable.
            </li>
          </ul>
        )}
      </section>
    </div>
  );
}

export function ErrorBoundary({ error }: Route.ErrorBoundaryProps) {
  return <ErrorView error={error} />;
}

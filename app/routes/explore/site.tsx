import { Link } from "react-router";
import type { Route } from "./+types/site";
import { requireUser } from "#app/auth/session.server.ts";
import { DetailList, showNumber } from "#app/components/detail-list.tsx";
import { ErrorView } from "#app/components/error-view.tsx";
import { GradeBadge } from "#app/components/grade-badge.tsx";
import { columnUnits, hasColumnInfo, StratColumn } from "#app/components/strat-column.tsx";
import { getDb } from "#app/db/client.server.ts";
import { siteDetail } from "#app/models/registry/site-page.server.ts";
import { formatCal, formatCalRange, formatMeasuredAge } from "#app/utils/age-format.ts";
import { notFound } from "#app/utils/http.server.ts";
import { CONSTRAINT_KIND_LABELS, STATUS_LABELS } from "#app/utils/labels.ts";

export const meta: Route.MetaFunction = ({ data }) => [
  { title: data ? `${data.detail.site.name} · Thawline` : "Site · Thawline" },
];

export async function loader({ request, params }: Route.LoaderArgs) {
  await requireUser(request);
  const id = Number(params.id);
  if (!Number.isSafeInteger(id) || id <= 0) notFound("There is no site with this number.");
  const detail = siteDetail(getDb(), id);
  if (!detail) notFound("There is no site with this number.");
  return { detail };
}

type Rows = Route.ComponentProps["loaderData"]["detail"]["rows"];

export default function SitePage({ loaderData }: Route.ComponentProps) {
  const { site, rows, determinationCount, sampleCount } = loaderData.detail;
  const units = hasColumnInfo(rows) ? columnUnits(rows) : [];
  const samples = groupBySample(rows);

  return (
    <article>
      <nav aria-label="Breadcrumb" className="text-sm text-muted">
        <Link to="/explore">Explore</Link> <span aria-hidden="true">/</span> <span>{site.name}</span>
      </nav>
      <h1 className="mt-2">{site.name}</h1>
      <p className="mt-1 text-muted">
        {sampleCount} sample{sampleCount === 1 ? "" : "s"}, {determinationCount} determination
        {determinationCount === 1 ? "" : "s"}
        {" · "}
        <Link to={`/explore?site=${encodeURIComponent(site.name)}`}>show in Explore</Link>
      </p>

      <section className="card mt-6 max-w-3xl" aria-labelledby="site-fields-heading">
        <h2 id="site-fields-heading">Site</h2>
        <div className="mt-3">
          <DetailList
            items={[
              ["Latitude, longitude", `${site.latitude.toFixed(5)}°, ${site.longitude.toFixed(5)}°`],
              ["Elevation", showNumber(site.elevationM, "m")],
              ["Location uncertainty", showNumber(site.locationUncertaintyM, "m")],
              ["Setting", site.setting],
              ["Region", site.region],
              ["Notes", site.notes],
              ["Added by", site.createdByName],
            ]}
          />
        </div>
      </section>

      {units.some((u) => u.dates.length > 0) ? (
        <section className="mt-10" aria-labelledby="column-heading">
          <h2 id="column-heading">Stratigraphic column</h2>
          <StratColumn units={units} />
        </section>
      ) : null}

      <section className="mt-10" aria-labelledby="samples-heading">
        <h2 id="samples-heading">Samples and determinations</h2>
        <p className="text-sm text-muted">In stratigraphic order (uppermost first), then by depth.</p>
        {samples.length === 0 ? (
          <p className="mt-3 text-muted">No samples have been recorded at this site.</p>
        ) : (
          <div className="mt-3 overflow-x-auto">
            <table className="data-table" data-testid="site-samples">
              <thead>
                <tr>
                  <th scope="col">Sample</th>
                  <th scope="col">Unit</th>
                  <th scope="col" className="text-right">
                    Depth (cm)
                  </th>
                  <th scope="col">Material</th>
                  <th scope="col">Lab code</th>
                  <th scope="col" className="text-right">
                    Measured age
                  </th>
                  <th scope="col" className="text-right">
                    Median (cal BP)
                  </th>
                  <th scope="col" className="text-right">
                    95.4 % range
                  </th>
                  <th scope="col">Constraint</th>
                  <th scope="col">Grade</th>
                  <th scope="col">Status</th>
                </tr>
              </thead>
              <tbody>
                {samples.map((s) =>
                  s.rows.map((r, i) => (
                    <tr key={`${s.sampleId}-${r.id ?? "none"}`}>
                      {i === 0 ? (
                        <>
                          <td rowSpan={s.rows.length} className="font-semibold">
                            {r.fieldCode}
                          </td>
                          <td rowSpan={s.rows.length}>
                            {r.stratUnit ?? ""}
                            {r.stratOrder != null ? <span className="text-muted"> ({r.stratOrder})</span> : null}
                          </td>
                          <td rowSpan={s.rows.length} className="text-right">
                            {showNumber(r.depthCm) ?? ""}
                          </td>
                          <td rowSpan={s.rows.length}>{r.material}</td>
                        </>
                      ) : null}
                      {r.id == null ? (
                        <td colSpan={7} className="text-muted italic">
                          no determination yet
                        </td>
                      ) : (
                        <>
                          <td className="whitespace-nowrap">
                            <Link to={`/determinations/${r.id}`}>{r.labCode}</Link>
                          </td>
                          <td className="text-right whitespace-nowrap">{formatMeasuredAge({ ...r, method: r.method ?? "" })}</td>
                          <td className="text-right">{formatCal(r.medianCalBp)}</td>
                          <td className="text-right whitespace-nowrap">{formatCalRange(r.hpd95FromBp, r.hpd95ToBp)}</td>
                          <td className="whitespace-nowrap">
                            {r.constraintKind ? CONSTRAINT_KIND_LABELS[r.constraintKind] : ""}
                          </td>
                          <td>
                            <GradeBadge grade={r.grade} />
                          </td>
                          <td className="whitespace-nowrap">{r.status ? STATUS_LABELS[r.status] : ""}</td>
                        </>
                      )}
                    </tr>
                  )),
                )}
              </tbody>
            </table>
          </div>
        )}
      </section>
    </article>
  );
}

function groupBySample(rows: Rows) {
  const out: { sampleId: number; rows: Rows }[] = [];
  for (const r of rows) {
    const last = out[out.length - 1];
    if (last && last.sampleId === r.sampleId) last.rows.push(r);
    else out.push({ sampleId: r.sampleId, rows: [r] });
  }
  return out;
}

export function ErrorBoundary({ error }: Route.ErrorBoundaryProps) {
  return <ErrorView error={error} />;
}

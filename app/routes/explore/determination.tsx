import { PublicationCitation } from "#app/components/publication-citation.tsx";
import { data, Link } from "react-router";
import type { Route } from "./+types/determination";
import { clientAddress, requireRole, requireUser } from "#app/auth/session.server.ts";
import { ActionButton } from "#app/components/ui/action-button.tsx";
import { reopenDetermination, ReviewRefused } from "#app/models/review/reviews.server.ts";
import { redirectWithFlash } from "#app/utils/flash.server.ts";
import { DetailList, showNumber, showWithError } from "#app/components/detail-list.tsx";
import { ErrorView } from "#app/components/error-view.tsx";
import { CalibrationPlot } from "#app/components/calibration-plot.tsx";
import { LuminescenceAge } from "#app/components/luminescence-age.tsx";
import { plotForDetermination } from "#app/models/calibration/calibration-plot.server.ts";
import { GradeBadge } from "#app/components/grade-badge.tsx";
import { getDb } from "#app/db/client.server.ts";
import type { HpdRange } from "#app/db/schema.ts";
import { determinationDetail, type DeterminationDetail } from "#app/models/registry/determination-page.server.ts";
import { editRefusal, getDetermination } from "#app/models/submission/form/write.server.ts";
import { formatCal, formatCalRange, formatMeasuredAge, formatProbability } from "#app/utils/age-format.ts";
import { notFound } from "#app/utils/http.server.ts";
import {
  calendarModelWords,
  CHECK_LABELS,
  CONSTRAINT_KIND_LABELS,
  conversionFactorWords,
  curveWords,
  FLAG_LABELS,
  METHOD_LABELS,
  SIGNAL_LABELS,
  STATUS_LABELS,
} from "#app/utils/labels.ts";
import { storyFromChanges } from "#app/utils/audit-sentences.ts";
import { formatTimestamp } from "#app/utils/time-format.ts";

export const meta: Route.MetaFunction = ({ data }) => [
  { title: data ? `${data.detail.determination.labCode} · Thawline` : "Determination · Thawline" },
];

export async function loader({ request, params }: Route.LoaderArgs) {
  const user = await requireUser(request);
  const id = Number(params.id);
  if (!Number.isSafeInteger(id) || id <= 0) notFound("There is no determination with this number.");
  const detail = determinationDetail(getDb(), id);
  if (!detail) notFound("There is no determination with this number.");
  const canReopen = user.roles.includes("editor") && detail.determination.status === "graded";
  const stored = getDetermination(getDb(), id);
  // The same rule the edit page and its action apply: the contributor, until the determination is graded.
  const editable = stored != null && editRefusal(stored, user.id) === null;
  return { detail, plot: plotForDetermination(getDb(), id), canReopen, editable };
}

/** Editors reopen a graded determination: back to the review queue, editable again by its contributor (audited). */
export async function action({ request, params }: Route.ActionArgs) {
  const user = await requireRole(request, "editor");
  const id = Number(params.id);
  if (!Number.isSafeInteger(id) || id <= 0) notFound("There is no determination with this number.");
  const form = await request.formData();
  if (form.get("intent") !== "reopen") return data({ error: "Unknown action." }, { status: 400 });
  try {
    reopenDetermination(getDb(), id, { userId: user.id, ip: clientAddress(request) });
  } catch (e) {
    if (e instanceof ReviewRefused) return data({ error: e.message }, { status: e.status });
    throw e;
  }
  return redirectWithFlash(`/determinations/${id}`, {
    kind: "success",
    message: "Reopened: the determination is back in the review queue, and its contributor may change it again.",
  });
}

type Detail = Route.ComponentProps["loaderData"]["detail"];

export default function DeterminationPage({ loaderData, actionData }: Route.ComponentProps) {
  const { detail, canReopen, editable } = loaderData;
  const d = detail.determination;
  return (
    <article>
      <nav aria-label="Breadcrumb" className="text-sm text-muted">
        <Link to="/explore">Explore</Link> <span aria-hidden="true">/</span>{" "}
        <Link to={`/sites/${detail.site.id}`}>{detail.site.name}</Link> <span aria-hidden="true">/</span> <span>{d.labCode}</span>
      </nav>
      <header className="mt-2 flex flex-wrap items-baseline gap-x-6 gap-y-2">
        <h1>{d.labCode}</h1>
        <p className="text-xl" data-testid="measured-age">
          {formatMeasuredAge(d)}
        </p>
        <GradeBadge grade={d.grade} />
        <span className="rounded border border-rule px-2 text-sm">{STATUS_LABELS[d.status]}</span>
        {editable ? (
          <Link to={`/submissions/${d.id}/edit`} className="btn-quiet" data-testid="edit-link">
            Edit or withdraw
          </Link>
        ) : null}
      </header>
      <p className="mt-1 text-muted">
        {METHOD_LABELS[d.method] ?? d.method}
        {d.signal ? ` (${d.signal})` : ""} on {detail.sample.material} from{" "}
        <Link to={`/sites/${detail.site.id}`}>{detail.site.name}</Link>, {CONSTRAINT_KIND_LABELS[d.constraintKind]} constraint
      </p>

      <div className="mt-8 grid grid-flow-row-dense gap-6 lg:grid-cols-2">
        <section className="card" aria-labelledby="measurement-heading">
          <h2 id="measurement-heading">Measurement</h2>
          <div className="mt-3">
            <MeasurementFields d={d} />
          </div>
        </section>

        <CalibrationSection detail={detail} plot={loaderData.plot} />

        <section className="card" aria-labelledby="sample-heading">
          <h2 id="sample-heading">Sample</h2>
          <div className="mt-3">
            <DetailList
              items={[
                ["Field code", detail.sample.fieldCode],
                ["Material", detail.sample.material],
                ["Depth", showNumber(detail.sample.depthCm, "cm")],
                ["Stratigraphic unit", detail.sample.stratUnit],
                ["Order in column", detail.sample.stratOrder != null ? `${detail.sample.stratOrder} (1 = uppermost)` : null],
                ["Context", detail.sample.context],
              ]}
            />
          </div>
        </section>

        <section className="card" aria-labelledby="site-heading">
          <h2 id="site-heading">Site</h2>
          <div className="mt-3">
            <DetailList
              items={[
                ["Name", <Link to={`/sites/${detail.site.id}`}>{detail.site.name}</Link>],
                ["Latitude, longitude", `${detail.site.latitude.toFixed(5)}°, ${detail.site.longitude.toFixed(5)}°`],
                ["Elevation", showNumber(detail.site.elevationM, "m")],
                ["Location uncertainty", showNumber(detail.site.locationUncertaintyM, "m")],
                ["Setting", detail.site.setting],
                ["Region", detail.site.region],
              ]}
            />
          </div>
        </section>

        <section className="card" aria-labelledby="provenance-heading">
          <h2 id="provenance-heading">Provenance</h2>
          <div className="mt-3">
            <DetailList
              items={[
                ["Lab", `${detail.lab.name} (${detail.lab.codePrefix})${detail.lab.city ? `, ${detail.lab.city}` : ""}`],
                ["Publication", detail.publication ? <PublicationCitation publication={detail.publication} /> : null],
                ["Contributor", detail.contributor?.name],
                ["Upload", detail.upload ? `${detail.upload.fileName}` : null],
                ["Added", formatTimestamp(d.createdAt) ?? ""],
                ["Last changed", `${formatTimestamp(d.updatedAt) ?? ""} (version ${d.version})`],
                ["Notes", d.notes],
              ]}
            />
          </div>
        </section>

        <ReviewSection detail={detail} canReopen={canReopen} error={actionData?.error ?? null} />
      </div>

      <ChecksSection checks={detail.checks} />
      <SiblingsSection detail={detail} />
      <HistorySection history={detail.history} />
    </article>
  );
}

function MeasurementFields({ d }: { d: Detail["determination"] }) {
  const common: [string, React.ReactNode][] = [
    ["Method", METHOD_LABELS[d.method] ?? d.method],
    ["Constraint kind", CONSTRAINT_KIND_LABELS[d.constraintKind]],
  ];
  if (d.method === "radiocarbon") {
    return (
      <DetailList
        items={[
          ...common,
          ["Age", formatMeasuredAge(d)],
          [
            "¹⁴C age as stored",
            d.isLimit ? `> ${showNumber(d.c14AgeYr, "¹⁴C yr BP") ?? "—"}` : showWithError(d.c14AgeYr, d.c14ErrorYr, "¹⁴C yr BP"),
          ],
          ["F¹⁴C", showWithError(d.f14c, d.f14cError)],
          ["δ¹³C", showNumber(d.d13cPermil, "‰")],
          ["δ¹³C-normalised", d.ageNormalised ? "yes (conventional age)" : "no (normalised on calibration)"],
          ["Greater-than age", d.isLimit ? "yes — a limit, not calibrated" : "no"],
          ["Pretreatment", d.pretreatment],
          ["Curve", curveWords(d.curveName)],
          ["ΔR", showWithError(d.deltaRYr, d.deltaRErrorYr, "¹⁴C yr")],
          ["ΔR derived against", d.deltaRCurve ? curveWords(d.deltaRCurve) : null],
          ["Freshwater offset", showWithError(d.freshwaterOffsetYr, d.freshwaterOffsetErrorYr, "¹⁴C yr")],
          ["Normalised to 0 ‰", d.normalisedToZeroPermil ? "yes — brought to −25 ‰ before calibration" : null],
        ]}
      />
    );
  }
  if (d.method === "luminescence") {
    return (
      <DetailList
        items={[
          ...common,
          ["Age", formatMeasuredAge(d)],
          ["Signal", d.signal ? (SIGNAL_LABELS[d.signal] ?? d.signal) : null],
          ["Mineral", d.mineral],
          ["De", showWithError(d.deGy, d.deErrorGy, "Gy")],
          [
            "Dose rate",
            d.doseRateGyPerKa != null
              ? `${showWithError(d.doseRateGyPerKa, d.doseRateErrorGyPerKa, "Gy/ka")} (${d.doseRateComputed ? "computed by the registry from the inputs below" : "the lab's value"})`
              : null,
          ],
          ["K", lab(d.kPercent, d.kErrorPercent, "%")],
          ["U", lab(d.uPpm, d.uErrorPpm, "ppm")],
          ["Th", lab(d.thPpm, d.thErrorPpm, "ppm")],
          ["Rb", lab(d.rbPpm, d.rbErrorPpm, "ppm")],
          [
            "Water content",
            d.waterContentFraction != null
              ? lab(d.waterContentFraction * 100, d.waterContentError != null ? d.waterContentError * 100 : null, "% of dry mass")
              : null,
          ],
          ["Grain size", showNumber(d.grainSizeUm, "µm")],
          ["Coarse or fine grains", d.grainUse],
          ["Etch depth", showNumber(d.etchDepthUm, "µm")],
          ["a-value", lab(d.aValue, d.aValueError)],
          ["Internal K", lab(d.internalKPercent, d.internalKErrorPercent, "%")],
          ["Internal Rb", lab(d.internalRbPpm, d.internalRbErrorPpm, "ppm")],
          ["Burial depth", lab(d.burialDepthM, d.burialDepthErrorM, "m")],
          ["Density", lab(d.densityGPerCm3, d.densityErrorGPerCm3, "g/cm³")],
          ["Lab's cosmic dose rate", lab(d.labCosmicGyPerKa, d.labCosmicErrorGyPerKa, "Gy/ka")],
          ["Conversion factors", d.conversionFactors ? conversionFactorWords(d.conversionFactors) : null],
          ["Year of measurement", d.measurementYear != null ? String(d.measurementYear) : null],
          ["Aliquots", showNumber(d.aliquots)],
          ["Age model", d.ageModel],
        ]}
      />
    );
  }
  return (
    <DetailList items={[...common, ["¹⁰Be concentration", showWithError(d.be10AtomsPerG, d.be10ErrorAtomsPerG, "atoms/g")]]} />
  );
}

/** A lab's input with its error, or "(no error given)" when the registry assumes one (the breakdown says which). */
function lab(x: number | null, err: number | null, unit?: string): string | null {
  if (x == null) return null;
  return err != null ? showWithError(x, err, unit) : `${showNumber(x, unit)} (no error given)`;
}

function RangeList({ ranges }: { ranges: HpdRange[] | null }) {
  if (!ranges || ranges.length === 0) return null;
  return (
    <ul>
      {ranges.map((r, i) => (
        <li key={i}>
          {formatCalRange(r.from, r.to)} cal BP <span className="text-muted">({formatProbability(r.p)})</span>
          {r.atCurveLimit ? <span className="text-muted"> — cut by the curve's end</span> : null}
        </li>
      ))}
    </ul>
  );
}

function CalibrationSection({ detail, plot }: { detail: Detail; plot: Route.ComponentProps["loaderData"]["plot"] }) {
  const cal = detail.calibration;
  const d = detail.determination;
  return (
    <section className="card lg:col-span-2" aria-labelledby="calibration-heading" data-testid="calibration-summary">
      <h2 id="calibration-heading">Calendar age</h2>
      <div className="mt-3">
        {cal ? (
          cal.error ? (
            <p>Not calibrated: {cal.error}</p>
          ) : (
            <DetailList
              items={[
                ["Curve", calendarModelWords(cal.curveLabel)],
                ["Median", cal.medianCalBp != null ? `${formatCal(cal.medianCalBp)} cal BP` : null],
                ["68.3 % range", <RangeList ranges={cal.hpd68} />],
                ["95.4 % range", <RangeList ranges={cal.hpd95} />],
                [
                  "Notes",
                  cal.notes?.length ? (
                    <ul data-testid="calibration-notes">
                      {cal.notes.map((n) => (
                        <li key={n}>{n}</li>
                      ))}
                    </ul>
                  ) : null,
                ],
                ["Calculated", formatTimestamp(cal.createdAt) ?? ""],
              ]}
            />
          )
        ) : d.isLimit ? (
          <p>A greater-than age is a limit and is not calibrated.</p>
        ) : (
          <p className="text-muted">Not calibrated yet.</p>
        )}
        {detail.hemisphere ? (
          <p className="mt-3 rounded border border-caution bg-caution-bg px-3 py-2 text-caution" data-testid="hemisphere-warning">
            {detail.hemisphere}
          </p>
        ) : null}
        {plot ? (
          <div className="mt-4">
            <CalibrationPlot {...plot} heading={d.labCode} />
          </div>
        ) : d.method === "luminescence" ? (
          <div className="mt-4">
            <LuminescenceAge
              fields={{ ...d, site: detail.site }}
              heading={d.labCode}
              summary={
                cal && !cal.error && cal.medianCalBp != null
                  ? { medianCalBp: cal.medianCalBp, hpd68: cal.hpd68 ?? [], hpd95: cal.hpd95 ?? [] }
                  : null
              }
            />
          </div>
        ) : null}
        {detail.earlierCalibrations.length > 0 ? (
          <details className="mt-4">
            <summary className="cursor-pointer text-sm">Earlier calibrations ({detail.earlierCalibrations.length})</summary>
            <ul className="mt-2 text-sm">
              {detail.earlierCalibrations.map((c) => (
                <li key={c.id}>
                  {calendarModelWords(c.curveLabel)}: {c.medianCalBp != null ? `${formatCal(c.medianCalBp)} cal BP` : "no result"}{" "}
                  <span className="text-muted">({formatTimestamp(c.createdAt) ?? ""})</span>
                </li>
              ))}
            </ul>
          </details>
        ) : null}
      </div>
    </section>
  );
}

function ReviewSection({ detail, canReopen, error }: { detail: Detail; canReopen: boolean; error: string | null }) {
  const r = detail.review;
  return (
    <section className="card" aria-labelledby="review-heading">
      <h2 id="review-heading">Review</h2>
      <div className="mt-3">
        {r ? (
          <>
            <DetailList
              items={[
                ["Grade", <GradeBadge grade={r.grade} />],
                [
                  "Flags",
                  r.flags.length ? (
                    <ul className="flex flex-wrap gap-1.5">
                      {r.flags.map((f) => (
                        <li key={f} className="rounded border border-ice-300 bg-ice-50 px-1.5 text-sm">
                          {FLAG_LABELS[f] ?? f}
                        </li>
                      ))}
                    </ul>
                  ) : (
                    "none"
                  ),
                ],
                ["Comment", r.comment],
                ["Reviewer", r.reviewerName],
                ["When", formatTimestamp(r.createdAt) ?? ""],
              ]}
            />
            {detail.reviewCount > 1 ? (
              <p className="mt-2 text-sm text-muted">The latest of {detail.reviewCount} reviews.</p>
            ) : null}
          </>
        ) : (
          <p className="text-muted">Not reviewed yet.</p>
        )}
        {error ? (
          <p role="alert" className="mt-3 text-conflict">
            {error}
          </p>
        ) : null}
        {canReopen ? (
          <div className="mt-4 flex flex-wrap items-center gap-3 border-t border-rule pt-3">
            <ActionButton
              intent="reopen"
              className="btn-quiet"
              confirm="Reopen this determination? It returns to the review queue and its contributor may change it again."
            >
              Reopen for review
            </ActionButton>
            <span className="text-sm text-muted">Editors only; recorded in the history.</span>
          </div>
        ) : null}
      </div>
    </section>
  );
}

const SEVERITY_TONE: Record<string, string> = {
  pass: "border-rule text-muted",
  note: "border-ice-300 bg-ice-50",
  warning: "border-caution bg-caution-bg text-caution",
  conflict: "border-conflict bg-conflict-bg text-conflict",
};

function ChecksSection({ checks }: { checks: Detail["checks"] }) {
  return (
    <section className="mt-10" aria-labelledby="checks-heading">
      <h2 id="checks-heading">Checks</h2>
      {checks.length === 0 ? (
        <p className="mt-2 text-muted">No checks have run on this determination yet.</p>
      ) : (
        <table className="data-table mt-3">
          <thead>
            <tr>
              <th scope="col">Check</th>
              <th scope="col">Result</th>
              <th scope="col">Explanation</th>
              <th scope="col">Suggested flag</th>
            </tr>
          </thead>
          <tbody>
            {checks.map((c) => (
              <tr key={c.id}>
                <td className="whitespace-nowrap">{CHECK_LABELS[c.check] ?? c.check}</td>
                <td>
                  <span className={`rounded border px-1.5 text-sm ${SEVERITY_TONE[c.severity] ?? ""}`}>{c.severity}</span>
                </td>
                <td>{c.message}</td>
                <td>{c.suggestedFlag ? (FLAG_LABELS[c.suggestedFlag] ?? c.suggestedFlag) : ""}</td>
              </tr>
            ))}
          </tbody>
        </table>
      )}
    </section>
  );
}

function SiblingTable({ rows, caption }: { rows: Detail["sameSample"]; caption: string }) {
  return (
    <table className="data-table mt-2">
      <caption className="sr-only">{caption}</caption>
      <thead>
        <tr>
          <th scope="col">Lab code</th>
          <th scope="col">Sample</th>
          <th scope="col">Material</th>
          <th scope="col" className="text-right">
            Measured age
          </th>
          <th scope="col" className="text-right">
            Median (cal BP)
          </th>
          <th scope="col">Grade</th>
        </tr>
      </thead>
      <tbody>
        {rows.map((s) => (
          <tr key={s.id}>
            <td>
              <Link to={`/determinations/${s.id}`}>{s.labCode}</Link>
            </td>
            <td>{s.fieldCode}</td>
            <td>{s.material}</td>
            <td className="text-right whitespace-nowrap">{formatMeasuredAge(s)}</td>
            <td className="text-right">{formatCal(s.medianCalBp)}</td>
            <td>
              <GradeBadge grade={s.grade} />
            </td>
          </tr>
        ))}
      </tbody>
    </table>
  );
}

function SiblingsSection({ detail }: { detail: Detail }) {
  return (
    <section className="mt-10" aria-labelledby="siblings-heading">
      <h2 id="siblings-heading">Related determinations</h2>
      <h3 className="mt-4 font-semibold">On the same sample ({detail.sample.fieldCode})</h3>
      {detail.sameSample.length ? (
        <SiblingTable rows={detail.sameSample} caption="Other determinations on the same sample" />
      ) : (
        <p className="mt-1 text-muted">No other determination on this sample.</p>
      )}
      <h3 className="mt-6 font-semibold">
        At the same site (<Link to={`/sites/${detail.site.id}`}>{detail.site.name}</Link>)
      </h3>
      {detail.sameSite.length ? (
        <SiblingTable rows={detail.sameSite} caption="Determinations on other samples at the same site" />
      ) : (
        <p className="mt-1 text-muted">No determination on other samples at this site.</p>
      )}
    </section>
  );
}

function HistorySection({ history }: { history: DeterminationDetail["history"] }) {
  return (
    <section className="mt-10" aria-labelledby="history-heading">
      <h2 id="history-heading">History</h2>
      {history.length === 0 ? (
        <p className="mt-2 text-muted">No recorded changes.</p>
      ) : (
        <ol className="mt-3 space-y-4" data-testid="audit-history">
          {history.map((h) => {
            const story = storyFromChanges(h.action, h.actorName, h.changes, h.whole);
            return (
              <li key={h.id} className="border-l-2 border-ice-300 pl-4">
                <p>
                  <span className="font-semibold">{story.headline}</span>{" "}
                  <span className="text-muted">on {formatTimestamp(h.at) ?? ""}</span>
                </p>
                {story.details.length > 0 ? (
                  <ul className="mt-1 list-disc pl-5 text-sm">
                    {story.details.map((line, k) => (
                      <li key={k}>{line}</li>
                    ))}
                  </ul>
                ) : !h.whole ? (
                  <p className="text-sm text-muted">No field changed.</p>
                ) : null}
              </li>
            );
          })}
        </ol>
      )}
    </section>
  );
}

export function ErrorBoundary({ error }: Route.ErrorBoundaryProps) {
  return <ErrorView error={error} />;
}

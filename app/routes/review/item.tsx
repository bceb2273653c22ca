import { useEffect } from "react";
import { data, Form, Link, redirect, useNavigate } from "react-router";
import { getFormProps, getTextareaProps, useForm } from "@conform-to/react";
import { parseWithZod } from "@conform-to/zod/v4";
import type { Route } from "./+types/item";
import { clientAddress, requireRole } from "#app/auth/session.server.ts";
import { CalibrationPlot } from "#app/components/calibration-plot.tsx";
import { LuminescenceAge } from "#app/components/luminescence-age.tsx";
import { NeighboursPanel } from "#app/components/review/neighbours-panel.tsx";
import { columnUnits, hasColumnInfo, StratColumn } from "#app/components/strat-column.tsx";
import { reviewNeighbourhood } from "#app/models/review/neighbours.server.ts";
import { siteDetail } from "#app/models/registry/site-page.server.ts";
import { CheckBadge } from "#app/components/check-badge.tsx";
import { DetailList, showNumber } from "#app/components/detail-list.tsx";
import { ErrorView } from "#app/components/error-view.tsx";
import { GradeBadge } from "#app/components/grade-badge.tsx";
import { getDb } from "#app/db/client.server.ts";
import { CHECK_KINDS, FLAGS } from "#app/db/schema.ts";
import { plotForDetermination } from "#app/models/calibration/calibration-plot.server.ts";
import { determinationDetail } from "#app/models/registry/determination-page.server.ts";
import { currentLease, nextInQueue, releaseItem, takeItem } from "#app/models/review/queue.server.ts";
import { askQuestion, recordReviews, reviewMessages, ReviewRefused } from "#app/models/review/reviews.server.ts";
import { gradeSchema, questionSchema } from "#app/utils/review-forms.ts";
import { FieldErrors } from "#app/components/ui/field-errors.tsx";
import { formatCal, formatMeasuredAge } from "#app/utils/age-format.ts";
import { notFound } from "#app/utils/http.server.ts";
import { CHECK_LABELS, CONSTRAINT_KIND_LABELS, FLAG_LABELS, STATUS_LABELS } from "#app/utils/labels.ts";

export const meta: Route.MetaFunction = ({ data }) => [
  { title: `Review ${data?.detail.determination.labCode ?? ""} · Thawline` },
];

function idOf(params: { id?: string }): number {
  const id = Number(params.id);
  if (!Number.isSafeInteger(id) || id <= 0) notFound("There is no determination with this number.");
  return id;
}

export async function loader({ request, params }: Route.LoaderArgs) {
  const user = await requireRole(request, "reviewer");
  const id = idOf(params);
  const db = getDb();
  const detail = determinationDetail(db, id);
  if (!detail) notFound("There is no determination with this number.");
  const lease = currentLease(db, id);
  const suggested = [
    ...new Set(
      detail.checks
        .filter((c) => c.suggestedFlag && (c.severity === "warning" || c.severity === "conflict"))
        .map((c) => c.suggestedFlag!),
    ),
  ];
  const siteRows = siteDetail(db, detail.site.id)?.rows ?? [];
  return {
    detail,
    plot: plotForDetermination(db, id),
    neighbourhood: reviewNeighbourhood(db, id),
    column: hasColumnInfo(siteRows) ? columnUnits(siteRows) : [],
    messages: reviewMessages(db, id),
    ownSubmission: detail.determination.contributorId === user.id,
    lease: lease ? { name: lease.name, mine: lease.reviewerId === user.id, expiresAt: lease.expiresAt } : null,
    suggested,
    nextId: nextInQueue(db, id, user.id),
  };
}

export async function action({ request, params }: Route.ActionArgs) {
  const user = await requireRole(request, "reviewer");
  const id = idOf(params);
  const db = getDb();
  const form = await request.formData();
  const actor = { userId: user.id, ip: clientAddress(request) };
  try {
    switch (form.get("intent")) {
      case "take":
        if (!takeItem(db, id, user.id))
          return data({ intent: "take", result: null, error: "Another reviewer has taken this one." }, { status: 409 });
        return redirect(`/review/${id}`);
      case "release":
        releaseItem(db, id, user.id);
        return redirect("/review");
      case "grade": {
        const submission = parseWithZod(form, { schema: gradeSchema });
        if (submission.status !== "success")
          return data({ intent: "grade", result: submission.reply(), error: null }, { status: 400 });
        recordReviews(db, [id], submission.value, actor);
        const next = nextInQueue(db, id, user.id);
        return redirect(next ? `/review/${next}` : "/review");
      }
      case "ask": {
        const submission = parseWithZod(form, { schema: questionSchema });
        if (submission.status !== "success")
          return data({ intent: "ask", result: submission.reply(), error: null }, { status: 400 });
        await askQuestion(db, id, submission.value.question, actor);
        return redirect("/review");
      }
      default:
        return data({ intent: null, result: null, error: "Unknown action." }, { status: 400 });
    }
  } catch (e) {
    if (e instanceof ReviewRefused) return data({ intent: null, result: null, error: e.message }, { status: e.status });
    throw e;
  }
}

export default function ReviewItem({ loaderData, actionData }: Route.ComponentProps) {
  const { detail, plot, neighbourhood, column, messages, ownSubmission, lease, suggested, nextId } = loaderData;
  const cal = detail.calibration;
  const d = detail.determination;
  const navigate = useNavigate();
  useEffect(() => {
    const onKey = (e: KeyboardEvent) => {
      if ((e.target as HTMLElement).closest("input, select, textarea")) return;
      if (e.key === "n" && nextId) navigate(`/review/${nextId}`);
      if (e.key === "q") navigate("/review");
    };
    window.addEventListener("keydown", onKey);
    return () => window.removeEventListener("keydown", onKey);
  }, [navigate, nextId]);
  const [gradeForm, gradeFields] = useForm({
    id: "grade",
    lastResult: actionData?.intent === "grade" ? actionData.result : undefined,
    shouldValidate: "onSubmit",
    shouldRevalidate: "onInput",
    onValidate: ({ formData }) => parseWithZod(formData, { schema: gradeSchema }),
  });
  const [askForm, askFields] = useForm({
    id: "ask",
    lastResult: actionData?.intent === "ask" ? actionData.result : undefined,
    shouldValidate: "onBlur",
    shouldRevalidate: "onInput",
    onValidate: ({ formData }) => parseWithZod(formData, { schema: questionSchema }),
  });
  const heldByOther = lease && !lease.mine;
  return (
    <article>
      <nav aria-label="Breadcrumb" className="text-sm text-muted">
        <Link to="/review">Review queue</Link> <span aria-hidden="true">/</span> <span>{d.labCode}</span>
        {nextId ? (
          <>
            {" · "}
            <Link to={`/review/${nextId}`}>Next item</Link> (<kbd>n</kbd>)
          </>
        ) : null}
      </nav>
      <header className="mt-2 flex flex-wrap items-baseline gap-x-6 gap-y-2">
        <h1>{d.labCode}</h1>
        <p className="text-xl">{formatMeasuredAge(d)}</p>
        <GradeBadge grade={d.grade} />
        <span className="rounded border border-rule px-2 text-sm">{STATUS_LABELS[d.status]}</span>
      </header>
      <p className="mt-1 text-muted">
        {d.method} on {detail.sample.material} from <Link to={`/sites/${detail.site.id}`}>{detail.site.name}</Link>,{" "}
        {CONSTRAINT_KIND_LABELS[d.constraintKind]} constraint · <Link to={`/determinations/${d.id}`}>full record</Link>
      </p>
      {actionData?.error ? (
        <p role="alert" className="mt-4 rounded border border-conflict bg-conflict-bg p-3 text-conflict">
          {actionData.error}
        </p>
      ) : null}

      <section className="mt-6" aria-labelledby="checks-heading">
        <h2 id="checks-heading">Checks</h2>
        {detail.checks.length === 0 ? (
          <p className="text-muted">The checks have not run on this determination yet.</p>
        ) : (
          <table className="data-table mt-2">
            <tbody>
              {worstFirst(detail.checks).map((c) => (
                <tr key={c.id}>
                  <th scope="row" className="whitespace-nowrap">
                    {CHECK_LABELS[c.check] ?? c.check}
                  </th>
                  <td>
                    <CheckBadge severity={c.severity} />
                  </td>
                  <td>{c.message}</td>
                  <td className="text-sm">{c.suggestedFlag ? `suggests: ${FLAG_LABELS[c.suggestedFlag]}` : ""}</td>
                </tr>
              ))}
            </tbody>
          </table>
        )}
      </section>

      <div className="mt-6 grid gap-6 lg:grid-cols-2">
        <section className="card">
          <h2>Calendar age</h2>
          {cal && cal.medianCalBp != null ? (
            <p>
              Median {formatCal(cal.medianCalBp)} cal BP{d.method === "radiocarbon" ? ` on ${cal.curveLabel}` : ""}.
            </p>
          ) : (
            <p className="text-muted">
              {d.isLimit ? "A greater-than age is a limit and is not calibrated." : "No calendar age."}
            </p>
          )}
          {plot ? (
            <CalibrationPlot {...plot} heading={d.labCode} />
          ) : d.method === "luminescence" ? (
            <LuminescenceAge
              fields={{ ...d, site: detail.site }}
              heading={d.labCode}
              summary={
                cal && !cal.error && cal.medianCalBp != null
                  ? { medianCalBp: cal.medianCalBp, hpd68: cal.hpd68 ?? [], hpd95: cal.hpd95 ?? [] }
                  : null
              }
            />
          ) : null}
        </section>
        <section className="card">
          <h2>Sample and site</h2>
          <DetailList
            items={[
              ["Sample", `${detail.sample.fieldCode}, ${detail.sample.material}`],
              ["Depth", showNumber(detail.sample.depthCm, "cm")],
              [
                "Unit",
                detail.sample.stratUnit ? `${detail.sample.stratUnit} (${detail.sample.stratOrder ?? "?"} from the top)` : null,
              ],
              ["Context", detail.sample.context],
              ["Site", `${detail.site.name}, ${detail.site.latitude.toFixed(4)}°, ${detail.site.longitude.toFixed(4)}°`],
              ["Setting", detail.site.setting],
            ]}
          />
        </section>
      </div>

      <div className="mt-6 grid gap-6 lg:grid-cols-2">
        {neighbourhood ? <NeighboursPanel hood={neighbourhood} labCode={d.labCode} /> : null}
        <section className="card" aria-labelledby="column-heading">
          <h2 id="column-heading">Stratigraphic column at {detail.site.name}</h2>
          {column.some((u) => u.dates.length > 0) ? (
            <StratColumn units={column} highlightId={d.id} />
          ) : (
            <p className="mt-2 text-muted">The site's samples give no unit order or depth, so there is no column to draw.</p>
          )}
        </section>
      </div>

      <section className="mt-6" aria-labelledby="siblings-heading">
        <h2 id="siblings-heading">Same sample and same site</h2>
        <ul className="mt-2 grid gap-1">
          {[...detail.sameSample, ...detail.sameSite].map((s) => (
            <li key={s.id}>
              <Link to={`/review/${s.id}`}>{s.labCode}</Link> · {s.fieldCode} · {s.material} · {formatMeasuredAge(s)} · median{" "}
              {formatCal(s.medianCalBp)} cal BP · <GradeBadge grade={s.grade} />
            </li>
          ))}
          {detail.sameSample.length + detail.sameSite.length === 0 ? (
            <li className="text-muted">No other determination here.</li>
          ) : null}
        </ul>
      </section>

      {messages.length ? (
        <section className="mt-6" aria-labelledby="messages-heading">
          <h2 id="messages-heading">Questions and answers</h2>
          <ul className="mt-2 grid gap-2">
            {messages.map((m) => (
              <li key={m.id} className="card">
                <p className="text-sm text-muted">{m.authorName}</p>
                <p>{m.body}</p>
              </li>
            ))}
          </ul>
        </section>
      ) : null}

      {ownSubmission ? (
        <p className="mt-6 rounded border border-rule p-3">You submitted this determination; another reviewer must grade it.</p>
      ) : heldByOther ? (
        <p className="mt-6 rounded border border-rule p-3">{lease.name} has taken this determination for review.</p>
      ) : (
        <div className="mt-6 grid gap-6 lg:grid-cols-2">
          <Form method="post" {...getFormProps(gradeForm)} className="card grid gap-3" aria-labelledby="grade-heading">
            <h2 id="grade-heading">Grade</h2>
            <input type="hidden" name="intent" value="grade" />
            <fieldset aria-describedby={gradeFields.grade.errors ? gradeFields.grade.errorId : undefined}>
              <legend className="label">Reliability</legend>
              <div className="mt-1 flex flex-wrap gap-3">
                {[3, 2, 1, 0].map((g) => (
                  <label key={g} className="flex items-center gap-1">
                    <input
                      type="radio"
                      name={gradeFields.grade.name}
                      value={g}
                      aria-invalid={gradeFields.grade.errors ? true : undefined}
                    />{" "}
                    <GradeBadge grade={g} />
                  </label>
                ))}
              </div>
              <FieldErrors id={gradeFields.grade.errorId} errors={gradeFields.grade.errors} />
            </fieldset>
            <fieldset>
              <legend className="label">Flags (the checks' suggestions are ticked)</legend>
              <div className="mt-1 grid gap-1 sm:grid-cols-2">
                {FLAGS.map((f) => (
                  <label key={f} className="text-sm">
                    <input type="checkbox" name="flags" value={f} defaultChecked={suggested.includes(f)} /> {FLAG_LABELS[f]}
                  </label>
                ))}
              </div>
            </fieldset>
            <div className="field">
              <label htmlFor={gradeFields.comment.id}>Comment</label>
              <textarea {...getTextareaProps(gradeFields.comment)} className="input" rows={3} />
              <FieldErrors id={gradeFields.comment.errorId} errors={gradeFields.comment.errors} />
            </div>
            <div className="flex gap-3">
              <button type="submit" className="btn">
                Record grade
              </button>
            </div>
          </Form>
          <div className="grid gap-3">
            <Form method="post" {...getFormProps(askForm)} className="card grid gap-3" aria-labelledby="ask-heading">
              <h2 id="ask-heading">Ask the contributor</h2>
              <input type="hidden" name="intent" value="ask" />
              <div className="field">
                <label htmlFor={askFields.question.id}>Question</label>
                <textarea {...getTextareaProps(askFields.question)} className="input" rows={3} />
                <FieldErrors id={askFields.question.errorId} errors={askFields.question.errors} />
              </div>
              <div>
                <button type="submit" className="btn">
                  Send question
                </button>
              </div>
            </Form>
            <Form method="post">
              <input type="hidden" name="intent" value={lease?.mine ? "release" : "take"} />
              <button type="submit" className="btn-quiet">
                {lease?.mine ? "Put back in the queue" : "Take it (others see it as taken for 30 minutes)"}
              </button>
            </Form>
          </div>
        </div>
      )}
    </article>
  );
}

const SEVERITY_ORDER: Record<string, number> = { conflict: 0, warning: 1, note: 2, pass: 3 };

/** The checks a reviewer must read first on top: conflicts, warnings, notes, then passes, each in the checks' own order. */
function worstFirst<T extends { check: string; severity: string }>(checks: readonly T[]): T[] {
  const order = (c: string) => {
    const i = CHECK_KINDS.indexOf(c as (typeof CHECK_KINDS)[number]);
    return i < 0 ? CHECK_KINDS.length : i;
  };
  return [...checks].sort(
    (a, b) => (SEVERITY_ORDER[a.severity] ?? 4) - (SEVERITY_ORDER[b.severity] ?? 4) || order(a.check) - order(b.check),
  );
}

export function ErrorBoundary({ error }: Route.ErrorBoundaryProps) {
  return <ErrorView error={error} />;
}

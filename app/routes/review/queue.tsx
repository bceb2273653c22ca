import { useEffect, useRef } from "react";
import { data, Form, Link, redirect, useNavigate } from "react-router";
import { parseWithZod } from "@conform-to/zod/v4";
import { z } from "zod";
import type { Route } from "./+types/queue";
import { clientAddress, requireRole } from "#app/auth/session.server.ts";
import { CheckBadge } from "#app/components/check-badge.tsx";
import { ErrorView } from "#app/components/error-view.tsx";
import { getDb } from "#app/db/client.server.ts";
import { FLAGS } from "#app/db/schema.ts";
import { listQueue, parseQueueFilters, queueFilterOptions, takeItem } from "#app/models/review/queue.server.ts";
import { rankWord } from "#app/utils/check-rank.ts";
import { JobProgress } from "#app/components/ui/job-progress.tsx";
import { recentJobs } from "#app/models/jobs.server.ts";
import { recordReviews, ReviewRefused } from "#app/models/review/reviews.server.ts";
import { gradeSchema } from "#app/utils/review-forms.ts";
import { formatCal } from "#app/utils/age-format.ts";
import { FLAG_LABELS, STATUS_LABELS } from "#app/utils/labels.ts";

export const meta: Route.MetaFunction = () => [{ title: "Review queue · Thawline" }];

export async function loader({ request }: Route.LoaderArgs) {
  const user = await requireRole(request, "reviewer");
  const filters = parseQueueFilters(new URL(request.url).searchParams);
  // A whole-registry check run under way changes the checks this queue shows: say so, with its progress.
  const checkRun = recentJobs(getDb(), "checks", 1).find((j) => j.status === "queued" || j.status === "running") ?? null;
  return { filters, queue: listQueue(getDb(), filters, user.id), options: queueFilterOptions(getDb()), checkRun };
}

/** The bulk form: the ids ticked in the queue and one grade, flags and comment for all of them. */
const bulkSchema = gradeSchema.extend({
  ids: z.array(z.coerce.number().int().positive()).min(1, { message: "Tick at least one determination." }),
});

export async function action({ request }: Route.ActionArgs) {
  const user = await requireRole(request, "reviewer");
  const form = await request.formData();
  const intent = form.get("intent");
  const db = getDb();
  if (intent === "take") {
    const id = Number(form.get("id"));
    if (!Number.isSafeInteger(id) || id <= 0) return data({ error: "Unknown determination." }, { status: 400 });
    if (!takeItem(db, id, user.id)) return data({ error: "Another reviewer has taken this one." }, { status: 409 });
    return redirect(`/review/${id}`);
  }
  if (intent === "bulk") {
    const submission = parseWithZod(form, { schema: bulkSchema });
    if (submission.status !== "success")
      return data(
        {
          error: Object.values(submission.error ?? {})
            .flat()
            .join(" "),
        },
        { status: 400 },
      );
    try {
      const { ids, ...grade } = submission.value;
      recordReviews(db, ids, grade, { userId: user.id, ip: clientAddress(request) });
      return redirect(`/review?${new URL(request.url).searchParams}`);
    } catch (e) {
      if (e instanceof ReviewRefused) return data({ error: e.message }, { status: e.status });
      throw e;
    }
  }
  return data({ error: "Unknown action." }, { status: 400 });
}

export default function Queue({ loaderData, actionData }: Route.ComponentProps) {
  const { filters, queue, options, checkRun } = loaderData;
  const navigate = useNavigate();
  const table = useRef<HTMLTableSectionElement>(null);
  // j / k move between items, Enter opens one: the queue is worked from the keyboard.
  useEffect(() => {
    const onKey = (e: KeyboardEvent) => {
      if ((e.target as HTMLElement).closest("input, select, textarea")) return;
      const links = [...(table.current?.querySelectorAll<HTMLAnchorElement>("a[data-item]") ?? [])];
      const at = links.indexOf(document.activeElement as HTMLAnchorElement);
      if (e.key === "j" || e.key === "k") {
        e.preventDefault();
        links[Math.max(0, Math.min(links.length - 1, at + (e.key === "j" ? 1 : -1)))]?.focus();
      }
    };
    window.addEventListener("keydown", onKey);
    return () => window.removeEventListener("keydown", onKey);
  }, [navigate]);
  const sel = (v: unknown) => (v === undefined ? "" : String(v));
  return (
    <div>
      <h1>Review queue</h1>
      <p className="mt-2 text-muted">
        {queue.total} determination{queue.total === 1 ? "" : "s"} await review (your own submissions are not listed):{" "}
        {["conflict", "warning", "note", "pass", "unchecked"]
          .filter((k) => queue.counts[k])
          .map((k) => `${queue.counts[k]} ${k}`)
          .join(" · ")}
        . {queue.awaitingAnswer} wait for a contributor's answer. Keys: <kbd>j</kbd> / <kbd>k</kbd> to move, <kbd>Enter</kbd> to
        open.
      </p>
      {checkRun ? (
        <div className="mt-4">
          <JobProgress job={checkRun} unit="determinations" label="The checks are being rerun; the worst checks may change" />
        </div>
      ) : null}
      <Form method="get" className="card mt-4 grid gap-3 sm:grid-cols-4">
        <Select name="region" label="Region" value={sel(filters.region)} options={options.regions.map((r) => [r, r])} />
        <Select name="lab" label="Lab" value={sel(filters.lab)} options={options.labs.map((l) => [String(l.id), l.name])} />
        <Select
          name="method"
          label="Method"
          value={sel(filters.method)}
          options={[
            ["radiocarbon", "radiocarbon"],
            ["luminescence", "luminescence"],
          ]}
        />
        <Select name="material" label="Material" value={sel(filters.material)} options={options.materials.map((m) => [m, m])} />
        <Select
          name="worst"
          label="Worst check"
          value={sel(filters.worst)}
          options={[
            ["conflict", "conflict"],
            ["warning", "warning"],
            ["note", "note"],
            ["pass", "pass"],
          ]}
        />
        <Select
          name="contributor"
          label="Contributor"
          value={sel(filters.contributor)}
          options={options.contributors.map((c) => [String(c.id), c.name])}
        />
        <Select
          name="batch"
          label="Upload batch"
          value={sel(filters.batch)}
          options={options.batches.map((b) => [String(b.id), b.fileName])}
        />
        <div className="field">
          <label htmlFor="q-sort">Order</label>
          <select id="q-sort" name="sort" className="input" defaultValue={filters.sort}>
            <option value="oldest">Oldest first</option>
            <option value="worst">Worst check first</option>
          </select>
        </div>
        <div className="sm:col-span-4">
          <button type="submit" className="btn">
            Show
          </button>
        </div>
      </Form>
      {actionData?.error ? (
        <p role="alert" className="mt-4 rounded border border-conflict bg-conflict-bg p-3 text-conflict">
          {actionData.error}
        </p>
      ) : null}
      {queue.rows.length === 0 ? (
        <p className="mt-6 text-muted">Nothing awaits review with these filters.</p>
      ) : (
        <Form method="post" className="mt-6">
          <input type="hidden" name="intent" value="bulk" />
          <div className="overflow-x-auto">
            <table className="data-table">
              <thead>
                <tr>
                  <th scope="col">
                    <span className="sr-only">Select</span>
                  </th>
                  <th scope="col">Lab code</th>
                  <th scope="col">Site</th>
                  <th scope="col">Material</th>
                  <th scope="col">Lab</th>
                  <th scope="col" className="text-right">
                    Median (cal BP)
                  </th>
                  <th scope="col">Worst check</th>
                  <th scope="col">Status</th>
                  <th scope="col">Contributor</th>
                  <th scope="col">Taken</th>
                </tr>
              </thead>
              <tbody ref={table}>
                {queue.rows.map((r) => (
                  <tr key={r.id}>
                    <td>
                      <input
                        type="checkbox"
                        name="ids"
                        value={r.id}
                        aria-label={`Select ${r.labCode}`}
                        disabled={!!r.leasedBy && !r.leasedByMe}
                      />
                    </td>
                    <td>
                      <Link to={`/review/${r.id}`} data-item>
                        {r.labCode}
                      </Link>
                    </td>
                    <td>{r.siteName}</td>
                    <td>{r.material}</td>
                    <td>{r.labName}</td>
                    <td className="text-right">{formatCal(r.medianCalBp)}</td>
                    <td>
                      <CheckBadge severity={rankWord(r.worstRank)} />
                    </td>
                    <td className="whitespace-nowrap">{STATUS_LABELS[r.status]}</td>
                    <td>{r.contributorName ?? "—"}</td>
                    <td className="text-sm">{r.leasedBy ? (r.leasedByMe ? "by you" : `by ${r.leasedBy}`) : ""}</td>
                  </tr>
                ))}
              </tbody>
            </table>
          </div>
          <fieldset className="card mt-4 grid gap-3">
            <legend className="label">Grade the ticked determinations together</legend>
            <div className="field">
              <label htmlFor="bulk-grade">Grade</label>
              <select id="bulk-grade" name="grade" className="input" required defaultValue="">
                <option value="" disabled>
                  Choose…
                </option>
                <option value="3">3 secure</option>
                <option value="2">2 usable</option>
                <option value="1">1 doubtful</option>
                <option value="0">0 rejected</option>
              </select>
            </div>
            <div className="flex flex-wrap gap-3">
              {FLAGS.map((f) => (
                <label key={f} className="text-sm">
                  <input type="checkbox" name="flags" value={f} /> {FLAG_LABELS[f]}
                </label>
              ))}
            </div>
            <div className="field">
              <label htmlFor="bulk-comment">Comment</label>
              <textarea id="bulk-comment" name="comment" className="input" rows={2} />
            </div>
            <div>
              <button type="submit" className="btn">
                Grade ticked determinations
              </button>
            </div>
          </fieldset>
        </Form>
      )}
    </div>
  );
}

function Select({ name, label, value, options }: { name: string; label: string; value: string; options: string[][] }) {
  return (
    <div className="field">
      <label htmlFor={`q-${name}`}>{label}</label>
      <select id={`q-${name}`} name={name} className="input" defaultValue={value}>
        <option value="">Any</option>
        {options.map(([v, l]) => (
          <option key={v} value={v}>
            {l}
          </option>
        ))}
      </select>
    </div>
  );
}

export function ErrorBoundary({ error }: Route.ErrorBoundaryProps) {
  return <ErrorView error={error} />;
}

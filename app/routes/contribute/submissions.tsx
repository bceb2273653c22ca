import { data, Form, Link, useNavigation } from "react-router";
import { z } from "zod";
import type { Route } from "./+types/submissions";
import { clientAddress, requireRole } from "#app/auth/session.server.ts";
import { ErrorView } from "#app/components/error-view.tsx";
import { GradeBadge } from "#app/components/grade-badge.tsx";
import { getDb } from "#app/db/client.server.ts";
import { STATUSES } from "#app/db/schema.ts";
import { listRowEditable, listSubmissions } from "#app/models/submission/list.server.ts";
import { SubmissionRefused } from "#app/models/submission/form/schema.server.ts";
import { withdrawSubmission } from "#app/models/submission/form/write.server.ts";
import { formatCal, formatMeasuredAge } from "#app/utils/age-format.ts";
import { redirectWithFlash } from "#app/utils/flash.server.ts";
import { METHOD_LABELS, STATUS_LABELS } from "#app/utils/labels.ts";
import { ActionButton } from "#app/components/ui/action-button.tsx";
import { Pagination } from "#app/components/ui/pagination.tsx";

export const meta: Route.MetaFunction = () => [{ title: "My submissions · Thawline" }];

const blank = (v: unknown) => (typeof v === "string" && v.trim() === "" ? undefined : v);
const filtersSchema = z.object({
  status: z.preprocess(blank, z.enum(STATUSES).optional()).catch(undefined),
  method: z.preprocess(blank, z.enum(["radiocarbon", "luminescence"]).optional()).catch(undefined),
  q: z.preprocess(blank, z.string().trim().max(200).optional()).catch(undefined),
  page: z.preprocess(blank, z.coerce.number().int().min(1).max(100_000).default(1)).catch(1),
});

function filtersFrom(url: URL) {
  return filtersSchema.parse(Object.fromEntries(url.searchParams));
}

export async function loader({ request }: Route.LoaderArgs) {
  const user = await requireRole(request, "contributor");
  const filters = filtersFrom(new URL(request.url));
  const result = listSubmissions(getDb(), user.id, filters);
  return {
    filters,
    result: { ...result, rows: result.rows.map((r) => ({ ...r, editable: listRowEditable(r) })) },
  };
}

export async function action({ request }: Route.ActionArgs) {
  const user = await requireRole(request, "contributor");
  const formData = await request.formData();
  const intent = formData.get("intent");
  switch (intent) {
    case "withdraw": {
      const id = Number(formData.get("id"));
      if (!Number.isSafeInteger(id) || id <= 0) return data({ error: "Say which determination to withdraw." }, { status: 400 });
      try {
        const withdrawn = withdrawSubmission(getDb(), id, { userId: user.id, ip: clientAddress(request) });
        const back = String(formData.get("back") ?? "");
        return redirectWithFlash(back.startsWith("?") ? `/submissions${back}` : "/submissions", {
          kind: "success",
          message: `${withdrawn.labCode} is withdrawn. It stays in the registry's history but is no longer offered to reviewers or modellers.`,
        });
      } catch (e) {
        if (e instanceof SubmissionRefused) return data({ error: e.message }, { status: e.status });
        throw e;
      }
    }
    default:
      return data({ error: "Unknown request." }, { status: 400 });
  }
}

type Filters = Route.ComponentProps["loaderData"]["filters"];

function search(filters: Filters, changes: Partial<Record<keyof Filters, string | number | undefined>> = {}): string {
  const merged = { ...filters, ...changes } as Record<string, unknown>;
  const params = new URLSearchParams();
  for (const [k, v] of Object.entries(merged)) {
    if (v === undefined || v === null || v === "") continue;
    if (k === "page" && Number(v) === 1) continue;
    params.set(k, String(v));
  }
  const s = params.toString();
  return s ? `?${s}` : "";
}

export default function Submissions({ loaderData, actionData }: Route.ComponentProps) {
  const { filters, result } = loaderData;
  const navigation = useNavigation();
  const busy = navigation.state !== "idle";
  const everything = Object.values(result.statusCounts).reduce((a, b) => a + (b ?? 0), 0);
  const filtered = !!(filters.status || filters.method || filters.q);
  const first = (result.page - 1) * result.pageSize + 1;
  const last = Math.min(result.total, result.page * result.pageSize);

  return (
    <div className="grid gap-6">
      <header className="flex flex-wrap items-end justify-between gap-4">
        <div>
          <p className="text-sm tracking-widest text-muted uppercase">Contribute</p>
          <h1 className="mt-1">My submissions</h1>
          <p className="mt-2 text-muted" aria-live="polite" data-testid="submissions-total">
            {everything === 0
              ? "Nothing submitted yet."
              : `${everything.toLocaleString("en")} determination${everything === 1 ? "" : "s"} in all: ` +
                STATUSES.filter((s) => result.statusCounts[s])
                  .map((s) => `${result.statusCounts[s]!.toLocaleString("en")} ${STATUS_LABELS[s]}`)
                  .join(", ") +
                "."}
          </p>
        </div>
        <div className="flex gap-3">
          <Link to="/submit" className="btn">
            Submit a determination
          </Link>
          <Link to="/uploads" className="btn-quiet">
            Upload a spreadsheet
          </Link>
        </div>
      </header>

      {actionData?.error ? (
        <p role="alert" className="rounded border border-conflict bg-conflict-bg px-4 py-2 text-conflict">
          {actionData.error}
        </p>
      ) : null}

      <Form method="get" className="card flex flex-wrap items-end gap-4" aria-label="Filter my submissions">
        <div className="field">
          <label htmlFor="q">Lab code or site</label>
          <input
            id="q"
            name="q"
            type="search"
            defaultValue={filters.q ?? ""}
            className="input"
            placeholder="e.g. part of a lab code"
          />
        </div>
        <div className="field">
          <label htmlFor="status">Status</label>
          <select id="status" name="status" defaultValue={filters.status ?? ""} className="input">
            <option value="">any</option>
            {STATUSES.map((s) => (
              <option key={s} value={s}>
                {STATUS_LABELS[s]}
              </option>
            ))}
          </select>
        </div>
        <div className="field">
          <label htmlFor="method">Method</label>
          <select id="method" name="method" defaultValue={filters.method ?? ""} className="input">
            <option value="">any</option>
            <option value="radiocarbon">radiocarbon</option>
            <option value="luminescence">luminescence</option>
          </select>
        </div>
        <button type="submit" className="btn-quiet">
          Show
        </button>
        {filtered ? <Link to="/submissions">Clear filters</Link> : null}
      </Form>

      {result.total === 0 ? (
        <div className="card text-center" data-testid="submissions-empty">
          {filtered ? (
            <p>
              None of your determinations match these filters. <Link to="/submissions">Show them all</Link>.
            </p>
          ) : (
            <p>
              You have not submitted any determinations yet. <Link to="/submit">Submit one</Link> or{" "}
              <Link to="/uploads">upload a spreadsheet</Link>.
            </p>
          )}
        </div>
      ) : (
        <>
          <p className="text-sm text-muted">
            Showing {first.toLocaleString("en")}–{last.toLocaleString("en")} of {result.total.toLocaleString("en")}, newest first.
            You can change or withdraw a determination until a reviewer grades it; when a reviewer asks a question, answer it
            here.
          </p>
          <div className={`overflow-x-auto ${busy ? "opacity-60" : ""}`} aria-busy={busy}>
            <table className="data-table" data-testid="submissions-table">
              <caption className="sr-only">
                My determinations, page {result.page} of {result.pageCount}
              </caption>
              <thead>
                <tr>
                  <th scope="col">Lab code</th>
                  <th scope="col">Site</th>
                  <th scope="col">Sample</th>
                  <th scope="col">Method</th>
                  <th scope="col" className="text-right">
                    Measured age
                  </th>
                  <th scope="col" className="text-right">
                    Median (cal BP)
                  </th>
                  <th scope="col">Grade</th>
                  <th scope="col">Status</th>
                  <th scope="col">
                    <span className="sr-only">Actions</span>
                  </th>
                </tr>
              </thead>
              <tbody>
                {result.rows.map((row) => (
                  <tr key={row.id} data-testid={`submission-${row.labCode}`}>
                    <td className="whitespace-nowrap">
                      <Link to={`/determinations/${row.id}`}>{row.labCode}</Link>
                      {row.version > 1 ? <span className="ml-1 text-sm text-muted">v{row.version}</span> : null}
                    </td>
                    <td>
                      <Link to={`/sites/${row.siteId}`}>{row.siteName}</Link>
                    </td>
                    <td>
                      {row.fieldCode}
                      <br />
                      <span className="text-sm text-muted">{row.material}</span>
                    </td>
                    <td>
                      {row.method === "luminescence" && row.signal ? `luminescence (${row.signal})` : METHOD_LABELS[row.method]}
                    </td>
                    <td className="text-right whitespace-nowrap">{formatMeasuredAge(row)}</td>
                    <td className="text-right whitespace-nowrap" title={row.calibrationError ?? undefined}>
                      {row.medianCalBp != null ? formatCal(row.medianCalBp) : <span className="text-muted">—</span>}
                    </td>
                    <td>
                      <GradeBadge grade={row.grade} />
                    </td>
                    <td data-testid="status">{STATUS_LABELS[row.status]}</td>
                    <td className="whitespace-nowrap text-right">
                      {row.status === "awaiting_answer" ? (
                        <Link to={`/submissions/${row.id}/answer`} className="btn mr-2 py-0.5 text-sm">
                          Answer the question<span className="sr-only"> about {row.labCode}</span>
                        </Link>
                      ) : null}
                      {row.editable ? (
                        <div className="flex items-center justify-end gap-2">
                          <Link to={`/submissions/${row.id}/edit`} className="btn-quiet py-0.5 text-sm">
                            Edit<span className="sr-only"> {row.labCode}</span>
                          </Link>
                          <ActionButton
                            intent="withdraw"
                            values={{ id: row.id, back: search(filters) }}
                            confirm={`Withdraw ${row.labCode}? This cannot be undone.`}
                          >
                            Withdraw<span className="sr-only"> {row.labCode}</span>
                          </ActionButton>
                        </div>
                      ) : null}
                    </td>
                  </tr>
                ))}
              </tbody>
            </table>
          </div>
          <Pagination
            page={result.page}
            pageCount={result.pageCount}
            href={(p) => `/submissions${search(filters, { page: p })}`}
            testId="submissions-pages"
            previousLabel="← Newer"
            nextLabel="Older →"
          />
        </>
      )}
    </div>
  );
}

export function ErrorBoundary({ error }: Route.ErrorBoundaryProps) {
  return <ErrorView error={error} />;
}

import { useEffect } from "react";
import { Form, Link, useFetcher, useNavigation } from "react-router";
import type { Route } from "./+types/upload";
import { clientAddress, requireRole } from "#app/auth/session.server.ts";
import { ErrorView } from "#app/components/error-view.tsx";
import { getDb } from "#app/db/client.server.ts";
import { sendEmail } from "#app/mail/send.server.ts";
import { uploadReceiptMessage } from "#app/mail/upload-receipt.server.ts";
import { CommitRefused } from "#app/models/submission/uploads/commit.server.ts";
import { COMMIT_JOB, commitUploadOffThread } from "#app/models/submission/uploads/off-thread.server.ts";
import type { JobView } from "#app/models/jobs.server.ts";
import { batchDeterminations, getBatchForUser, remapUpload, sheetOf } from "#app/models/submission/uploads/batches.server.ts";
import type { ColumnMapping } from "#app/models/submission/uploads/mapping.server.ts";
import { COLUMNS } from "#app/utils/determination-input/columns.ts";
import type { CreatedDetermination } from "#app/models/submission/uploads/batches.server.ts";
import { formatCal, formatCalRange, formatCount } from "#app/utils/age-format.ts";
import { METHOD_LABELS } from "#app/utils/labels.ts";
import { describeRows, groupCautions } from "#app/utils/caution-groups.ts";
import { env } from "#app/utils/env.server.ts";
import { redirectWithFlash } from "#app/utils/flash.server.ts";
import { badRequest, notFound } from "#app/utils/http.server.ts";
import { RecordLinkText } from "#app/components/ui/record-link-text.tsx";

export const meta: Route.MetaFunction = ({ data }) => [{ title: `${data?.batch.fileName ?? "Upload"} · Thawline` }];

/** Errors shown on the page; all of them are in the CSV download. */
const SHOWN_ERRORS = 200;
const SHOWN_CAUTION_GROUPS = 100;
/** Created determinations listed after a commit; all of them are in My submissions. */
const SHOWN_CREATED = 500;

export async function loader({ request, params }: Route.LoaderArgs) {
  const user = await requireRole(request, "contributor");
  const batch = getBatchForUser(getDb(), params.publicId, user.id);
  if (!batch) notFound("No upload with this id.");
  const { head, headers } = sheetOf(batch);
  const errors = batch.errors ?? [];
  const warnings = head.warnings ?? [];
  const errorRows = new Set(errors.map((e) => e.row)).size;
  return {
    batch: {
      publicId: batch.publicId,
      fileName: batch.fileName,
      fileKind: batch.fileKind,
      status: batch.status,
      rowCount: batch.rowCount,
      validCount: batch.validCount,
      committedCount: batch.committedCount,
    },
    headers,
    mapping: batch.mapping ?? {},
    notices: head.notices ?? [],
    preview: head.preview ?? null,
    errors: errors.slice(0, SHOWN_ERRORS),
    errorCount: errors.length,
    errorRows,
    cautions: groupCautions(warnings).slice(0, SHOWN_CAUTION_GROUPS),
    warningCount: warnings.length,
    columns: COLUMNS.map((c) => ({ name: c.name, label: c.label, unit: c.unit })),
    created: batch.status === "committed" ? batchDeterminations(getDb(), batch.id, SHOWN_CREATED) : null,
    // Sent with a commit, so the page can follow that commit's job while it waits for the answer.
    ticket: crypto.randomUUID(),
    commitJob: COMMIT_JOB,
  };
}

export async function action({ request, params }: Route.ActionArgs) {
  const user = await requireRole(request, "contributor");
  const db = getDb();
  const batch = getBatchForUser(db, params.publicId, user.id);
  if (!batch) notFound("No upload with this id.");
  const form = await request.formData();
  const intent = String(form.get("intent") ?? "");
  const here = `/uploads/${batch.publicId}`;
  try {
    switch (intent) {
      case "remap": {
        const { headers } = sheetOf(batch);
        const mapping: ColumnMapping = {};
        headers.forEach((h, i) => {
          mapping[h] = String(form.get(`map.${i}`) ?? "");
        });
        const v = remapUpload(db, batch, mapping);
        return redirectWithFlash(here, {
          kind: "info",
          message: `Checked again: ${v.validCount} of ${v.results.length} rows are valid.`,
        });
      }
      case "commit-all":
      case "commit-valid": {
        const mode = intent === "commit-all" ? "all" : "valid_only";
        const ticket = String(form.get("ticket") ?? "").slice(0, 64) || undefined;
        const result = await commitUploadOffThread(db, batch, mode, { userId: user.id }, { ip: clientAddress(request), ticket });
        const base = env().APP_URL ?? new URL(request.url).origin;
        let mailNote = " A receipt is on its way by e-mail.";
        try {
          await sendEmail({
            to: user.email,
            ...uploadReceiptMessage({
              fileName: batch.fileName,
              committed: result.committed,
              skipped: batch.rowCount - result.committed,
              submissionsUrl: `${base}/submissions`,
              uploadUrl: `${base}${here}`,
            }),
            tags: [{ name: "kind", value: "upload_receipt" }],
          });
        } catch (e) {
          // The commit stands; only the receipt failed.
          console.error("upload receipt not sent:", e);
          mailNote = " (The e-mail receipt could not be sent.)";
        }
        return redirectWithFlash(here, {
          kind: "success",
          message: `Committed ${formatCount(result.committed)} determination${result.committed === 1 ? "" : "s"}; they are calibrated and waiting for review.${mailNote}`,
        });
      }
      default:
        badRequest(`Unknown intent "${intent}".`);
    }
  } catch (e) {
    if (e instanceof CommitRefused) return redirectWithFlash(here, { kind: "error", message: e.message });
    throw e;
  }
}

export default function Upload({ loaderData }: Route.ComponentProps) {
  const { batch, headers, mapping, notices, preview, errors, errorCount, errorRows, cautions, warningCount, columns, created } =
    loaderData;
  const navigation = useNavigation();
  const busy = navigation.state === "submitting";
  const committing = busy && String(navigation.formData?.get("intent") ?? "").startsWith("commit");
  const parsed = batch.status === "parsed";
  const invalidRows = batch.rowCount - batch.validCount;
  return (
    <div className="space-y-10">
      <header>
        <p className="text-sm text-muted">
          <Link to="/uploads">Uploads</Link> / {batch.fileName}
        </p>
        <h1 className="mt-1">{batch.fileName}</h1>
        <p className="mt-2 text-lg" data-testid="upload-summary">
          {batch.rowCount.toLocaleString("en")} rows read · {batch.validCount.toLocaleString("en")} valid ·{" "}
          {invalidRows.toLocaleString("en")} with errors
          {batch.status === "committed" ? ` · ${batch.committedCount.toLocaleString("en")} committed` : ""}
          {batch.status === "undone" ? " · undone" : ""}
        </p>
        {notices.length > 0 ? (
          <ul className="card mt-4 space-y-1" aria-label="Notes on the file">
            {notices.map((n) => (
              <li key={n}>{n}</li>
            ))}
          </ul>
        ) : null}
      </header>

      {batch.status === "committed" && created ? <CreatedList created={created} /> : null}

      {parsed && preview ? (
        <section aria-labelledby="preview-h">
          <h2 id="preview-h">What a commit creates</h2>
          <dl className="mt-4 grid max-w-3xl grid-cols-2 gap-4 sm:grid-cols-4" data-testid="upload-preview">
            <Stat label="determinations" value={preview.determinations} />
            <Stat
              label="new sites"
              value={preview.newSites}
              note={preview.existingSites ? `${preview.existingSites} existing reused` : undefined}
            />
            <Stat
              label="new samples"
              value={preview.newSamples}
              note={preview.existingSamples ? `${preview.existingSamples} existing reused` : undefined}
            />
            <Stat label="new labs" value={preview.newLabs.length} note={preview.newLabs.join(", ") || undefined} />
          </dl>
          <p className="mt-2 text-sm text-muted">
            Counts for the valid rows; every determination is calibrated during the commit.
          </p>
          <Form method="post" className="mt-6 flex flex-wrap items-start gap-4">
            <input type="hidden" name="ticket" value={loaderData.ticket} />
            <div>
              <button
                type="submit"
                name="intent"
                value="commit-all"
                className="btn"
                disabled={busy || errorCount > 0}
                aria-describedby={errorCount > 0 ? "commit-all-why" : undefined}
              >
                Commit all {batch.rowCount.toLocaleString("en")} rows
              </button>
              {errorCount > 0 ? (
                <p id="commit-all-why" className="mt-1 max-w-xs text-sm text-muted">
                  Not possible while {errorRows} row{errorRows === 1 ? " has" : "s have"} errors: fix the file and upload it
                  again, or commit the valid rows only.
                </p>
              ) : null}
            </div>
            <button
              type="submit"
              name="intent"
              value="commit-valid"
              className={errorCount > 0 ? "btn" : "btn-quiet"}
              disabled={busy || batch.validCount === 0}
            >
              Commit the {batch.validCount.toLocaleString("en")} valid rows only
            </button>
          </Form>
          {committing ? <CommitProgress ticket={loaderData.ticket} kind={loaderData.commitJob} /> : null}
        </section>
      ) : null}

      {errorCount > 0 ? (
        <section aria-labelledby="errors-h">
          <div className="flex flex-wrap items-baseline justify-between gap-4">
            <h2 id="errors-h">Errors</h2>
            <a href={`/uploads/${batch.publicId}/errors.csv`} download>
              Download all {errorCount.toLocaleString("en")} errors as CSV
            </a>
          </div>
          <p className="mt-1 text-muted">
            {errorCount > errors.length
              ? `Showing the first ${errors.length} of ${errorCount.toLocaleString("en")} errors.`
              : `${errorCount} error${errorCount === 1 ? "" : "s"} in ${errorRows} row${errorRows === 1 ? "" : "s"}.`}{" "}
            Row numbers are as your spreadsheet shows them (the header is row 1).
          </p>
          <div className="mt-4 overflow-x-auto">
            <table className="data-table" data-testid="upload-errors">
              <thead>
                <tr>
                  <th scope="col" className="text-right">
                    Row
                  </th>
                  <th scope="col">Column</th>
                  <th scope="col">Problem</th>
                </tr>
              </thead>
              <tbody>
                {errors.map((e, i) => (
                  <tr key={i}>
                    <td className="text-right tabular-nums">{e.row}</td>
                    <td>
                      <code>{e.column}</code>
                    </td>
                    <td>
                      <RecordLinkText text={e.message} />
                    </td>
                  </tr>
                ))}
              </tbody>
            </table>
          </div>
        </section>
      ) : parsed ? (
        <p className="card" data-testid="upload-no-errors">
          No errors: every row is valid.
        </p>
      ) : null}

      {warningCount > 0 ? (
        <section aria-labelledby="warnings-h">
          <h2 id="warnings-h">Cautions</h2>
          <p className="mt-1 max-w-3xl text-muted">
            {formatCount(warningCount)} caution{warningCount === 1 ? "" : "s"}, folded by column and kind. They do not stop a
            commit, but reviewers will see them.
          </p>
          <ul className="mt-3 grid gap-2" data-testid="upload-cautions">
            {cautions.map((c) => (
              <li key={`${c.column}|${c.message}`}>
                <details className="card py-2">
                  <summary className="cursor-pointer">
                    <code>{c.column}</code>: {c.message}{" "}
                    <span className="text-sm text-muted">
                      ({c.rows.length === 1 ? "1 row" : `${formatCount(c.rows.length)} rows`})
                    </span>
                  </summary>
                  <p className="mt-2 text-sm">{describeRows(c.rows)}</p>
                </details>
              </li>
            ))}
          </ul>
        </section>
      ) : null}

      {parsed ? (
        <section aria-labelledby="mapping-h">
          <h2 id="mapping-h">Columns</h2>
          <p className="mt-1 max-w-3xl text-muted">
            Which registry column each column of your file holds. The guess comes from the headers and from your lab’s last
            upload; change it and check again. Columns set to “not used” are ignored.
          </p>
          <Form method="post" className="mt-4">
            <input type="hidden" name="intent" value="remap" />
            <div className="grid max-w-4xl gap-x-6 gap-y-3 sm:grid-cols-2">
              {headers.map((h, i) => (
                <div className="field" key={`${i}-${h}`}>
                  <label htmlFor={`map-${i}`}>{h}</label>
                  <select id={`map-${i}`} name={`map.${i}`} className="input" defaultValue={mapping[h] ?? ""}>
                    <option value="">— not used —</option>
                    {columns.map((c) => (
                      <option key={c.name} value={c.name}>
                        {c.name} ({c.label}
                        {c.unit ? `, ${c.unit}` : ""})
                      </option>
                    ))}
                  </select>
                </div>
              ))}
            </div>
            <button type="submit" className="btn mt-4" disabled={busy}>
              Check again with these columns
            </button>
          </Form>
        </section>
      ) : null}
    </div>
  );
}

/** After a commit: every determination the upload created, with its calendar age and a link. */
function CreatedList({ created }: { created: { rows: CreatedDetermination[]; total: number } }) {
  return (
    <section aria-labelledby="created-h">
      <h2 id="created-h">Created</h2>
      <p className="mt-1 max-w-3xl text-muted">
        {formatCount(created.total)} determination{created.total === 1 ? " is" : "s are"} in the registry with status “submitted”,
        calibrated and waiting for review. Follow them in <Link to="/submissions">My submissions</Link>
        {created.total > created.rows.length ? `; the first ${formatCount(created.rows.length)} are listed here` : ""}.
      </p>
      <div className="mt-4 overflow-x-auto">
        <table className="data-table" data-testid="upload-created">
          <thead>
            <tr>
              <th scope="col">Lab code</th>
              <th scope="col">Site</th>
              <th scope="col">Method</th>
              <th scope="col" className="text-right">
                Median (cal BP)
              </th>
              <th scope="col" className="text-right">
                95.4 % range (cal BP)
              </th>
            </tr>
          </thead>
          <tbody>
            {created.rows.map((d) => (
              <tr key={d.id}>
                <td>
                  <Link to={`/determinations/${d.id}`}>{d.labCode}</Link>
                </td>
                <td>{d.siteName}</td>
                <td>{METHOD_LABELS[d.method] ?? d.method}</td>
                <td className="text-right tabular-nums">
                  {d.medianCalBp == null ? "no calendar age" : formatCal(d.medianCalBp)}
                </td>
                <td className="text-right tabular-nums">{formatCalRange(d.hpd95FromBp, d.hpd95ToBp)}</td>
              </tr>
            ))}
          </tbody>
        </table>
      </div>
    </section>
  );
}

function Stat({ label, value, note }: { label: string; value: number; note?: string }) {
  return (
    <div className="card">
      <dt className="text-sm text-muted">{label}</dt>
      <dd className="text-2xl tabular-nums">{value.toLocaleString("en")}</dd>
      {note ? <dd className="text-sm text-muted">{note}</dd> : null}
    </div>
  );
}

export function ErrorBoundary({ error }: Route.ErrorBoundaryProps) {
  return <ErrorView error={error} />;
}

/**
 * While a commit runs (the form's request waits for it), its job's progress: rows written, then
 * calibration and checks. Polls the job the commit's ticket names once a second.
 */
function CommitProgress({ ticket, kind }: { ticket: string; kind: string }) {
  const fetcher = useFetcher<JobView>();
  useEffect(() => {
    const url = `/api/jobs/ticket?kind=${encodeURIComponent(kind)}&ticket=${encodeURIComponent(ticket)}`;
    const timer = setInterval(() => {
      if (fetcher.state === "idle") void fetcher.load(url);
    }, 1000);
    return () => clearInterval(timer);
    // The ticket is fixed for the page's life; polling restarts only with it.
    // eslint-disable-next-line react-hooks/exhaustive-deps
  }, [ticket, kind]);
  const job = fetcher.data && "status" in fetcher.data ? fetcher.data : null;
  const pct = job && job.total ? Math.round((job.progress / job.total) * 100) : 0;
  const text = !job
    ? "Starting the commit…"
    : `${job.message ?? "Writing rows"}: ${formatCount(job.progress)} of ${formatCount(job.total)} rows (${pct} %)`;
  return (
    <div className="card mt-4 max-w-3xl space-y-2" data-testid="commit-progress">
      <p className="text-sm" role="status" aria-live="polite">
        {text}
      </p>
      <div
        role="progressbar"
        aria-label={`Commit: ${pct} %`}
        aria-valuemin={0}
        aria-valuemax={100}
        aria-valuenow={pct}
        className="h-2 w-full overflow-hidden rounded bg-ice-100"
      >
        <div className="h-full bg-ice-600 transition-[width]" style={{ width: `${pct}%` }} />
      </div>
    </div>
  );
}

import { useRef, useState } from "react";
import { Link, useNavigate } from "react-router";
import type { Route } from "./+types/uploads";
import { clientAddress, requireRole } from "#app/auth/session.server.ts";
import { ErrorView } from "#app/components/error-view.tsx";
import { getDb } from "#app/db/client.server.ts";
import { CommitRefused } from "#app/models/submission/uploads/commit.server.ts";
import { getBatchForUser, listBatches } from "#app/models/submission/uploads/batches.server.ts";
import { undoUpload } from "#app/models/submission/uploads/undo.server.ts";
import { env } from "#app/utils/env.server.ts";
import { redirectWithFlash } from "#app/utils/flash.server.ts";
import { badRequest, notFound } from "#app/utils/http.server.ts";
import { ActionButton } from "#app/components/ui/action-button.tsx";
import { formatTimestamp } from "#app/utils/time-format.ts";

export const meta: Route.MetaFunction = () => [{ title: "Upload determinations · Thawline" }];

export async function loader({ request }: Route.LoaderArgs) {
  const user = await requireRole(request, "contributor");
  return { batches: listBatches(getDb(), user.id), maxBytes: env().UPLOAD_MAX_BYTES };
}

export async function action({ request }: Route.ActionArgs) {
  const user = await requireRole(request, "contributor");
  const form = await request.formData();
  const intent = String(form.get("intent") ?? "");
  switch (intent) {
    case "undo": {
      const db = getDb();
      const batch = getBatchForUser(db, String(form.get("publicId") ?? ""), user.id);
      if (!batch) notFound("No upload with this id.");
      try {
        const { removed } = undoUpload(db, batch, { userId: user.id, ip: clientAddress(request) });
        return redirectWithFlash("/uploads", {
          kind: "success",
          message: `Undone: ${removed} determination${removed === 1 ? "" : "s"} from “${batch.fileName}” taken out of the registry.`,
        });
      } catch (e) {
        if (e instanceof CommitRefused) return redirectWithFlash("/uploads", { kind: "error", message: e.message });
        throw e;
      }
    }
    default:
      badRequest(`Unknown intent "${intent}".`);
  }
}

const STATUS_WORDS: Record<string, string> = {
  parsed: "waiting for commit",
  committed: "committed",
  undone: "undone",
  discarded: "discarded",
};

export default function Uploads({ loaderData }: Route.ComponentProps) {
  const { batches, maxBytes } = loaderData;
  return (
    <div className="space-y-10">
      <header>
        <h1>Upload determinations</h1>
        <p className="mt-2 max-w-3xl text-muted">
          Send a spreadsheet of determinations (CSV or .xlsx). Every row is checked first; nothing enters the registry until you
          commit, and you choose whether to commit everything or only the valid rows.
        </p>
        <p className="mt-3">
          Start from the template:{" "}
          <a href="/uploads/template.xlsx" download>
            template (.xlsx)
          </a>
          , with a sheet explaining every column, or{" "}
          <a href="/uploads/template.csv" download>
            template (CSV)
          </a>
          .
        </p>
      </header>
      <UploadForm maxBytes={maxBytes} />
      <section aria-labelledby="history">
        <h2 id="history">Your uploads</h2>
        {batches.length === 0 ? (
          <p className="card mt-4 text-muted" data-testid="uploads-empty">
            You have not uploaded anything yet. Download the template, fill it in and upload it above.
          </p>
        ) : (
          <div className="mt-4 overflow-x-auto">
            <table className="data-table" data-testid="uploads-table">
              <thead>
                <tr>
                  <th scope="col">File</th>
                  <th scope="col">By</th>
                  <th scope="col">Uploaded</th>
                  <th scope="col" className="text-right">
                    Rows
                  </th>
                  <th scope="col" className="text-right">
                    Valid
                  </th>
                  <th scope="col" className="text-right">
                    Committed
                  </th>
                  <th scope="col">Status</th>
                  <th scope="col">
                    <span className="sr-only">Actions</span>
                  </th>
                </tr>
              </thead>
              <tbody>
                {batches.map((b) => (
                  <tr key={b.id}>
                    <td>{b.fileKind === "json" ? b.fileName : <Link to={`/uploads/${b.publicId}`}>{b.fileName}</Link>}</td>
                    <td>{b.userName}</td>
                    <td>{formatTimestamp(b.createdAt)}</td>
                    <td className="text-right tabular-nums">{b.rowCount.toLocaleString("en")}</td>
                    <td className="text-right tabular-nums">{b.validCount.toLocaleString("en")}</td>
                    <td className="text-right tabular-nums">{b.committedCount.toLocaleString("en")}</td>
                    <td>{STATUS_WORDS[b.status] ?? b.status}</td>
                    <td>
                      {b.undoable ? (
                        <ActionButton
                          intent="undo"
                          values={{ publicId: b.publicId }}
                          className="btn-quiet"
                          confirm={`Take the ${b.committedCount} determinations of “${b.fileName}” out of the registry?`}
                        >
                          Undo
                        </ActionButton>
                      ) : b.status === "parsed" ? (
                        <Link to={`/uploads/${b.publicId}`}>Review and commit</Link>
                      ) : b.undoRefusal ? (
                        <span className="text-sm text-muted">
                          {b.undoRefusal.replace("This upload cannot be undone: ", "No undo: ")}
                        </span>
                      ) : null}
                    </td>
                  </tr>
                ))}
              </tbody>
            </table>
            <p className="mt-2 text-sm text-muted">
              An upload can be undone while its determinations are untouched: none reviewed, withdrawn, released or scored.
            </p>
          </div>
        )}
      </section>
    </div>
  );
}

/** Sends the file with XMLHttpRequest so the bar can show real upload progress. */
function UploadForm({ maxBytes }: { maxBytes: number }) {
  const navigate = useNavigate();
  const inputRef = useRef<HTMLInputElement>(null);
  const [progress, setProgress] = useState<number | null>(null);
  const [phase, setPhase] = useState<"idle" | "sending" | "checking">("idle");
  const [error, setError] = useState<string | null>(null);
  const limitMb = (maxBytes / 1024 / 1024).toFixed(0);

  function onSubmit(e: React.FormEvent<HTMLFormElement>) {
    e.preventDefault();
    const file = inputRef.current?.files?.[0];
    setError(null);
    if (!file) return setError("Choose a CSV or .xlsx file first.");
    if (file.size > maxBytes)
      return setError(
        `The file is ${(file.size / 1024 / 1024).toFixed(1)} MB; the limit is ${limitMb} MB. Split it into several files.`,
      );
    const body = new FormData();
    body.append("file", file);
    const xhr = new XMLHttpRequest();
    xhr.open("POST", "/uploads/file");
    xhr.setRequestHeader("Accept", "application/json");
    xhr.upload.onprogress = (ev) => {
      if (ev.lengthComputable) setProgress(ev.loaded / ev.total);
    };
    xhr.upload.onload = () => setPhase("checking");
    xhr.onload = () => {
      let data: { location?: string; error?: string };
      try {
        data = JSON.parse(xhr.responseText);
      } catch {
        data = { error: `The upload failed (HTTP ${xhr.status}).` };
      }
      if (xhr.status === 200 && data.location) navigate(data.location);
      else {
        setPhase("idle");
        setProgress(null);
        setError(data.error ?? `The upload failed (HTTP ${xhr.status}).`);
      }
    };
    xhr.onerror = () => {
      setPhase("idle");
      setProgress(null);
      setError("The upload was interrupted. Check the connection and try again.");
    };
    setPhase("sending");
    setProgress(0);
    xhr.send(body);
  }

  const busy = phase !== "idle";
  return (
    <form
      method="post"
      action="/uploads/file"
      encType="multipart/form-data"
      onSubmit={onSubmit}
      className="card max-w-2xl"
      aria-busy={busy}
    >
      <div className="field">
        <label htmlFor="upload-file">Spreadsheet (CSV or .xlsx, up to {limitMb} MB)</label>
        <input
          ref={inputRef}
          id="upload-file"
          name="file"
          type="file"
          accept=".csv,.xlsx,text/csv,application/vnd.openxmlformats-officedocument.spreadsheetml.sheet"
          className="input"
          aria-describedby={error ? "upload-error" : undefined}
          disabled={busy}
        />
        {error ? (
          <p id="upload-error" className="field-error" role="alert" data-testid="upload-error">
            {error}
          </p>
        ) : null}
      </div>
      {progress !== null ? (
        <div className="mt-4" aria-live="polite">
          <progress className="w-full" max={1} value={phase === "checking" ? undefined : progress} aria-label="Upload progress" />
          <p className="mt-1 text-sm text-muted">
            {phase === "checking" ? "Checking every row…" : `Sending… ${Math.round(progress * 100)} %`}
          </p>
        </div>
      ) : null}
      <button type="submit" className="btn mt-4" disabled={busy}>
        {busy ? "Uploading…" : "Upload and check"}
      </button>
    </form>
  );
}

export function ErrorBoundary({ error }: Route.ErrorBoundaryProps) {
  return <ErrorView error={error} />;
}

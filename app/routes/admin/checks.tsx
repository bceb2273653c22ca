import { data, Form, useNavigation } from "react-router";
import { getFormProps, getInputProps, getTextareaProps, useForm, type SubmissionResult } from "@conform-to/react";
import { getZodConstraint, parseWithZod } from "@conform-to/zod/v4";
import { z } from "zod";
import type { Route } from "./+types/checks";
import { clientAddress, requireRole } from "#app/auth/session.server.ts";
import { CheckBadge } from "#app/components/check-badge.tsx";
import { ErrorView } from "#app/components/error-view.tsx";
import { ActionButton } from "#app/components/ui/action-button.tsx";
import { JobProgress } from "#app/components/ui/job-progress.tsx";
import { getDb } from "#app/db/client.server.ts";
import { recentJobs } from "#app/models/jobs.server.ts";
import { startCheckRun } from "#app/models/review/check-job.server.ts";
import { checkSummary } from "#app/models/review/check-run.server.ts";
import { addReconstruction, chooseReconstruction, listReconstructions } from "#app/models/review/reconstructions.server.ts";
import { groupThousands } from "#app/science/calendar.ts";
import { formatYears } from "#app/utils/age-format.ts";
import { env } from "#app/utils/env.server.ts";
import { redirectWithFlash } from "#app/utils/flash.server.ts";
import { badRequest, notFound } from "#app/utils/http.server.ts";
import { formatDay } from "#app/utils/time-format.ts";
import { formatBytes } from "#app/utils/format-bytes.ts";
import { LabelledField } from "#app/components/ui/labelled-field.tsx";

export const meta: Route.MetaFunction = () => [{ title: "Checks and reconstructions · Thawline" }];

/** The one schema of the "add a reconstruction" form, shared by the browser and the server. */
function reconstructionSchema(maxBytes: number) {
  return z.object({
    intent: z.literal("upload"),
    file: z
      .instanceof(File, { message: "Choose the reconstruction's GeoJSON file." })
      .refine((f) => f.size > 0, "The file is empty.")
      .refine((f) => f.size <= maxBytes, `The file is larger than ${formatBytes(maxBytes)}.`)
      .refine((f) => /\.(geo)?json$/i.test(f.name), "Upload a .geojson or .json file."),
    name: z
      .string({ error: "Give the reconstruction a name." })
      .trim()
      .min(3, "At least 3 characters.")
      .max(120, "At most 120 characters."),
    description: z.string().trim().max(2000, "At most 2,000 characters.").optional(),
    uncertaintyYr: z
      .number({ error: "Give the uncertainty in whole years, e.g. 300." })
      .positive("The uncertainty must be more than 0 years.")
      .max(10_000, "At most 10,000 years.")
      .optional(),
    useNow: z.boolean().optional(),
  });
}

export async function loader({ request }: Route.LoaderArgs) {
  await requireRole(request, "editor");
  const db = getDb();
  return {
    reconstructions: listReconstructions(db),
    jobs: recentJobs(db, "checks", 3),
    summary: checkSummary(db),
    maxBytes: env().RECONSTRUCTION_MAX_BYTES,
  };
}

export async function action({ request }: Route.ActionArgs) {
  const user = await requireRole(request, "editor");
  const db = getDb();
  const actor = { userId: user.id, ip: clientAddress(request) };
  const maxBytes = env().RECONSTRUCTION_MAX_BYTES;
  if (Number(request.headers.get("Content-Length") ?? 0) > maxBytes + 64 * 1024) {
    const result: SubmissionResult<string[]> = {
      status: "error",
      error: { file: [`The file is larger than ${formatBytes(maxBytes)}.`] },
    };
    return data({ result }, { status: 413 });
  }
  const formData = await request.formData();
  switch (formData.get("intent")) {
    case "run": {
      const job = startCheckRun(db, { actorId: user.id, reason: `Whole-registry check run started by ${user.name}` });
      return redirectWithFlash("/checks", {
        kind: "success",
        message: `Checking ${groupThousands(job.total)} determinations in the background.`,
      });
    }
    case "use": {
      const raw = formData.get("id");
      const id = raw === "none" ? null : Number(raw);
      if (id !== null && (!Number.isSafeInteger(id) || id <= 0)) badRequest("Which reconstruction?");
      const chosen = chooseReconstruction(db, id, actor);
      if (!chosen) notFound("There is no such reconstruction.");
      return redirectWithFlash("/checks", {
        kind: chosen.changed ? "success" : "info",
        message: !chosen.changed
          ? "Nothing changed: the check already uses this."
          : chosen.name
            ? `The reconstruction check now uses “${chosen.name}”; rechecking ${groupThousands(chosen.total)} determinations.`
            : `The reconstruction check is off; rechecking ${groupThousands(chosen.total)} determinations.`,
      });
    }
    case "upload": {
      const submission = parseWithZod(formData, { schema: reconstructionSchema(maxBytes) });
      if (submission.status !== "success") return data({ result: submission.reply() }, { status: 400 });
      const { file, useNow, ...v } = submission.value;
      const added = addReconstruction(db, new Uint8Array(await file.arrayBuffer()), { ...v, useForChecks: !!useNow }, actor);
      if (!added.ok) return data({ result: submission.reply({ fieldErrors: { [added.field]: added.errors } }) }, { status: 400 });
      return redirectWithFlash("/checks", {
        kind: "success",
        message:
          `“${v.name}” stored with ${added.isochrones} isochrones` +
          (added.jobId ? `; the check now uses it, rechecking ${groupThousands(added.total)} determinations.` : "."),
      });
    }
    default:
      badRequest("Unknown action.");
  }
}

export default function ChecksPage({ loaderData, actionData }: Route.ComponentProps) {
  const { reconstructions, jobs, summary, maxBytes } = loaderData;
  const schema = reconstructionSchema(maxBytes);
  const navigation = useNavigation();
  const [form, fields] = useForm({
    id: "add-reconstruction",
    lastResult: navigation.state === "idle" ? actionData?.result : null,
    constraint: getZodConstraint(schema),
    shouldValidate: "onBlur",
    shouldRevalidate: "onInput",
    onValidate({ formData }) {
      return parseWithZod(formData, { schema });
    },
  });
  const pending = navigation.state !== "idle" ? navigation.formData?.get("intent") : null;
  const running = jobs.some((j) => j.status === "queued" || j.status === "running");
  const inUse = reconstructions.find((r) => r.usedForChecks);

  return (
    <div className="space-y-10">
      <header className="max-w-3xl">
        <h1>Checks and margin reconstructions</h1>
        <p className="mt-3 text-lg">
          The seven automatic checks run on every new or changed determination. Run them over the whole registry after a change of
          method or setting; choosing another margin reconstruction reruns them by itself.
        </p>
      </header>

      <section aria-labelledby="run-heading" className="space-y-3">
        <h2 id="run-heading">Whole-registry check run</h2>
        <p className="text-muted" data-testid="check-summary">
          {summary.determinations === 0
            ? "No determination has been checked yet."
            : `${groupThousands(summary.determinations)} determinations checked; worst result: `}
          {(["conflict", "warning", "note", "pass"] as const)
            .filter((s) => summary.worst[s])
            .map((s, i) => (
              <span key={s}>
                {i ? ", " : ""}
                {groupThousands(summary.worst[s]!)} <CheckBadge severity={s} />
              </span>
            ))}
          {summary.determinations ? "." : null}
        </p>
        <Form method="post">
          <input type="hidden" name="intent" value="run" />
          <button type="submit" className="btn" disabled={running || pending === "run"}>
            {running ? "A check run is under way" : pending === "run" ? "Starting…" : "Run every check on the whole registry"}
          </button>
        </Form>
        {jobs.length ? (
          <ul className="space-y-3" aria-label="Recent check runs">
            {jobs.map((job) => (
              <li key={job.id}>
                <JobProgress job={job} unit="determinations" />
              </li>
            ))}
          </ul>
        ) : null}
      </section>

      <section aria-labelledby="recon-heading" className="space-y-3">
        <h2 id="recon-heading">Margin reconstructions</h2>
        <p className="max-w-3xl text-muted">
          The reconstruction check asks, for each date that says its site was free of ice, how likely the chosen reconstruction
          puts the site still under ice at that age. Its isochrone ages count with the uncertainty stated here.{" "}
          {inUse ? `The check uses “${inUse.name}”.` : "No reconstruction is chosen, so the check passes every date."}
        </p>
        {reconstructions.length === 0 ? (
          <p className="card text-muted">No reconstruction is stored yet. Add one below.</p>
        ) : (
          <div className="overflow-x-auto">
            <table className="data-table" data-testid="reconstructions">
              <thead>
                <tr>
                  <th scope="col">Reconstruction</th>
                  <th scope="col" className="text-right">
                    Isochrones
                  </th>
                  <th scope="col">Ages (cal BP)</th>
                  <th scope="col">Stated uncertainty (1σ)</th>
                  <th scope="col">Added</th>
                  <th scope="col">Reconstruction check</th>
                </tr>
              </thead>
              <tbody>
                {reconstructions.map((r) => (
                  <tr key={r.id}>
                    <td className="max-w-md">
                      <span className="font-semibold">{r.name}</span>
                      {r.isDemo ? <span className="ml-2 rounded border border-rule px-1 text-sm">demo</span> : null}
                      {r.description ? <p className="mt-1 text-sm text-muted">{r.description}</p> : null}
                    </td>
                    <td className="text-right">{groupThousands(r.isochrones)}</td>
                    <td className="whitespace-nowrap">
                      {r.oldestCalBp != null && r.youngestCalBp != null
                        ? `${formatYears(r.oldestCalBp)} to ${formatYears(r.youngestCalBp)}`
                        : "—"}
                    </td>
                    <td className="whitespace-nowrap">
                      {r.uncertaintyYr != null ? `± ${formatYears(r.uncertaintyYr)} yr` : "—"}
                    </td>
                    <td className="text-sm">
                      {formatDay(r.createdAt)}
                      {r.createdByName ? <br /> : null}
                      {r.createdByName}
                    </td>
                    <td>
                      {r.usedForChecks ? (
                        <div className="flex flex-wrap items-center gap-2">
                          <span className="rounded border border-ice-500 bg-ice-50 px-1.5 text-sm">in use</span>
                          <ActionButton
                            intent="use"
                            values={{ id: "none" }}
                            label={`Stop using ${r.name} for the check`}
                            confirm="Turn the reconstruction check off? Every determination is rechecked."
                          >
                            Stop using
                          </ActionButton>
                        </div>
                      ) : (
                        <ActionButton
                          intent="use"
                          values={{ id: r.id }}
                          label={`Use ${r.name} for the check`}
                          confirm={`Use “${r.name}” for the reconstruction check? Every determination is rechecked.`}
                        >
                          Use for the check
                        </ActionButton>
                      )}
                    </td>
                  </tr>
                ))}
              </tbody>
            </table>
          </div>
        )}
      </section>

      <section aria-labelledby="add-heading" className="max-w-3xl space-y-3">
        <h2 id="add-heading">Add a reconstruction</h2>
        <p className="text-muted">
          A GeoJSON FeatureCollection of margin isochrones: each feature a Polygon or MultiPolygon (the area still under ice at
          that age) with a numeric <code>age_cal_bp</code>, one feature per age. State the uncertainty of the ages below or as{" "}
          <code>age_uncertainty_yr</code> on the features. Longitude and latitude in degrees (WGS 84). Up to{" "}
          {formatBytes(maxBytes)}.
        </p>
        <Form method="post" encType="multipart/form-data" className="card space-y-4" {...getFormProps(form)}>
          <input type="hidden" name="intent" value="upload" />
          <LabelledField label="GeoJSON file" id={fields.file.id} errors={fields.file.errors} errorId={fields.file.errorId}>
            <input
              {...getInputProps(fields.file, { type: "file" })}
              accept=".geojson,.json,application/geo+json"
              className="input"
            />
          </LabelledField>
          <div className="grid gap-4 sm:grid-cols-2">
            <LabelledField label="Name" id={fields.name.id} errors={fields.name.errors} errorId={fields.name.errorId}>
              <input {...getInputProps(fields.name, { type: "text" })} className="input" autoComplete="off" />
            </LabelledField>
            <LabelledField
              label="Uncertainty of the ages, years (1σ)"
              id={fields.uncertaintyYr.id}
              errors={fields.uncertaintyYr.errors}
              errorId={fields.uncertaintyYr.errorId}
            >
              <input {...getInputProps(fields.uncertaintyYr, { type: "number" })} className="input" placeholder="from the file" />
            </LabelledField>
          </div>
          <LabelledField
            label="Description and source"
            id={fields.description.id}
            errors={fields.description.errors}
            errorId={fields.description.errorId}
          >
            <textarea {...getTextareaProps(fields.description)} rows={2} className="input" />
          </LabelledField>
          <label className="flex items-center gap-2">
            <input {...getInputProps(fields.useNow, { type: "checkbox" })} /> Use it for the reconstruction check at once (reruns
            every check)
          </label>
          <button type="submit" className="btn" disabled={pending === "upload"}>
            {pending === "upload" ? "Checking the file…" : "Add reconstruction"}
          </button>
        </Form>
      </section>
    </div>
  );
}

export function ErrorBoundary({ error }: Route.ErrorBoundaryProps) {
  return <ErrorView error={error} />;
}

import { data, Form, useNavigation } from "react-router";
import { getFormProps, getInputProps, getSelectProps, getTextareaProps, useForm, type SubmissionResult } from "@conform-to/react";
import { getZodConstraint, parseWithZod } from "@conform-to/zod/v4";
import { z } from "zod";
import type { Route } from "./+types/curves";
import { clientAddress, requireRole } from "#app/auth/session.server.ts";
import { ErrorView } from "#app/components/error-view.tsx";
import { getDb } from "#app/db/client.server.ts";
import { activateCurveVersion, addCurveVersion } from "#app/models/calibration/curve-versions.server.ts";
import { CurveImportError, listCurves } from "#app/models/calibration/curves.server.ts";
import { recentJobs } from "#app/models/jobs.server.ts";
import { JobProgress } from "#app/components/ui/job-progress.tsx";
import { startRecalibration } from "#app/models/calibration/recalibration.server.ts";
import { groupThousands } from "#app/science/calendar.ts";
import { DEFAULT_MAX_STEP } from "#app/science/curve.ts";
import { env } from "#app/utils/env.server.ts";
import { redirectWithFlash } from "#app/utils/flash.server.ts";
import { badRequest, notFound } from "#app/utils/http.server.ts";
import { ActionButton } from "#app/components/ui/action-button.tsx";
import { formatBytes } from "#app/utils/format-bytes.ts";
import { LabelledField } from "#app/components/ui/labelled-field.tsx";

export const meta: Route.MetaFunction = () => [{ title: "Curves — Thawline" }];

/** The one schema of the "add a curve" form, shared by the browser and the server. */
function curveUploadSchema(maxBytes: number) {
  return z.object({
    intent: z.literal("import"),
    file: z
      .instanceof(File, { message: "Choose the curve's CSV file." })
      .refine((f) => f.size > 0, "The file is empty.")
      .refine((f) => f.size <= maxBytes, `The file is larger than ${formatBytes(maxBytes)}.`)
      .refine((f) => /\.(csv|txt)$/i.test(f.name), "Upload a .csv file in the curve layout (cal_bp, c14_age, c14_sigma, …)."),
    name: z
      .string({ error: "Give a short name, e.g. shcal20." })
      .trim()
      .toLowerCase()
      .regex(/^[a-z][a-z0-9_-]{1,39}$/, "Use 2–40 lower-case letters, digits, - or _, starting with a letter (e.g. shcal20)."),
    displayName: z.string({ error: "Give the name people read, e.g. SHCal20." }).trim().min(2, "At least 2 characters.").max(80),
    kind: z.enum(["atmospheric", "marine"], { error: "Choose atmospheric or marine." }),
    version: z
      .string({ error: "Give a version, e.g. 2020 or 2020-revised." })
      .trim()
      .max(40, "At most 40 characters.")
      .regex(/^[\w.\- ]+$/, "Use letters, digits, spaces, dots, - or _."),
    citation: z.string({ error: "Give the curve's citation." }).trim().min(10, "Give the full citation.").max(1000),
    doi: z
      .string()
      .trim()
      .regex(/^10\.\d{4,9}\/\S+$/, "A DOI starts with 10. followed by a prefix and a suffix, e.g. 10.99999/curve.1.")
      .optional(),
    maxStep: z
      .number({ error: "Give the largest step between rows in years, e.g. 20." })
      .int("Whole years only.")
      .positive("The step must be at least 1 year.")
      .max(1000, "At most 1,000 years."),
  });
}

export async function loader({ request }: Route.LoaderArgs) {
  await requireRole(request, "editor");
  const db = getDb();
  return {
    curves: listCurves(db).map((c) => ({
      id: c.id,
      name: c.name,
      displayName: c.displayName,
      kind: c.kind,
      version: c.version,
      rowCount: c.rowCount,
      calMinBp: c.calMinBp,
      calMaxBp: c.calMaxBp,
      citation: c.citation,
      doi: c.doi,
      active: c.active,
      createdAt: c.createdAt.getTime(),
    })),
    jobs: recentJobs(db, "recalibrate", 5),
    maxBytes: env().UPLOAD_MAX_BYTES,
  };
}

export async function action({ request }: Route.ActionArgs) {
  const user = await requireRole(request, "editor");
  const maxBytes = env().UPLOAD_MAX_BYTES;
  const db = getDb();
  const actor = { id: user.id, ip: clientAddress(request) };
  const declared = Number(request.headers.get("Content-Length") ?? 0);
  if (declared > maxBytes + 64 * 1024) {
    const result: SubmissionResult<string[]> = {
      status: "error",
      error: { file: [`The file is larger than ${formatBytes(maxBytes)}.`] },
    };
    return data({ result }, { status: 413 });
  }
  const formData = await request.formData();
  const intent = formData.get("intent");
  switch (intent) {
    case "import": {
      const submission = parseWithZod(formData, { schema: curveUploadSchema(maxBytes) });
      if (submission.status !== "success") return data({ result: submission.reply() }, { status: 400 });
      const v = submission.value;
      let text: string;
      try {
        text = new TextDecoder("utf-8", { fatal: true }).decode(await v.file.arrayBuffer());
      } catch {
        return data(
          { result: submission.reply({ fieldErrors: { file: ["The file is not UTF-8 text; save it as UTF-8 CSV."] } }) },
          { status: 400 },
        );
      }
      const existing = listCurves(db).find((c) => c.name === v.name && c.version === v.version);
      if (existing) {
        return data(
          {
            result: submission.reply({
              fieldErrors: {
                version: [`${existing.displayName} version ${v.version} is already stored; give this file another version.`],
              },
            }),
          },
          { status: 400 },
        );
      }
      let added;
      try {
        added = addCurveVersion(
          db,
          {
            name: v.name,
            displayName: v.displayName,
            kind: v.kind,
            version: v.version,
            citation: v.citation,
            doi: v.doi,
            maxStep: v.maxStep,
          },
          text,
          actor,
        );
      } catch (error) {
        if (!(error instanceof CurveImportError)) throw error;
        // The headline ("… is not a valid curve", "… does not match its published values"), then each problem.
        const headline = error.message.split(": ")[0]!;
        const lines = error.issues.length
          ? [`${headline}:`, ...error.issues.slice(0, 8).map((i) => (i.line ? `Line ${i.line}: ${i.message}` : i.message))]
          : [error.message];
        if (error.issues.length > 8) lines.push(`… and ${error.issues.length - 8} more problems.`);
        return data({ result: submission.reply({ fieldErrors: { file: lines } }) }, { status: 400 });
      }
      const job = startRecalibration(db, {
        curveName: added.curve.name,
        actorId: user.id,
        reason: `${added.curve.displayName} ${added.curve.version} added`,
      });
      return redirectWithFlash("/curves", {
        kind: "success",
        message:
          `${added.curve.displayName} ${added.curve.version} added and made active` +
          (job.total ? `; recalibrating ${groupThousands(job.total)} determinations.` : "; no determinations use it yet."),
      });
    }
    case "activate": {
      const curveId = Number(formData.get("curveId"));
      if (!Number.isInteger(curveId) || curveId <= 0) badRequest("Which curve version?");
      const result = activateCurveVersion(db, curveId, actor);
      if (!result) notFound("No such curve version.");
      if (!result.changed) {
        return redirectWithFlash("/curves", {
          kind: "info",
          message: `${result.curve.displayName} ${result.curve.version} is already the active version.`,
        });
      }
      const job = startRecalibration(db, {
        curveName: result.curve.name,
        actorId: user.id,
        reason: `${result.curve.displayName} ${result.curve.version} activated`,
      });
      return redirectWithFlash("/curves", {
        kind: "success",
        message:
          `${result.curve.displayName} ${result.curve.version} is now the active version` +
          (job.total ? `; recalibrating ${groupThousands(job.total)} determinations.` : "."),
      });
    }
    default:
      badRequest("Unknown action.");
  }
}

export default function CurvesPage({ loaderData, actionData }: Route.ComponentProps) {
  const { curves, jobs, maxBytes } = loaderData;
  const schema = curveUploadSchema(maxBytes);
  const navigation = useNavigation();
  const [form, fields] = useForm({
    id: "add-curve",
    lastResult: navigation.state === "idle" ? actionData?.result : null,
    constraint: getZodConstraint(schema),
    shouldValidate: "onBlur",
    shouldRevalidate: "onInput",
    defaultValue: { maxStep: String(DEFAULT_MAX_STEP), kind: "atmospheric" },
    onValidate({ formData }) {
      return parseWithZod(formData, { schema });
    },
  });
  const busy = navigation.state !== "idle" && navigation.formData?.get("intent") === "import";

  return (
    <div className="space-y-10">
      <header className="max-w-3xl">
        <h1>Calibration curves</h1>
        <p className="mt-3 text-lg">
          Every radiocarbon determination is calibrated on the active version of its curve. Adding a version or choosing another
          recalibrates the determinations on that curve; their earlier results are kept, labelled with the curve version they came
          from.
        </p>
      </header>

      {jobs.length ? (
        <section aria-labelledby="jobs-heading" className="space-y-3">
          <h2 id="jobs-heading">Recalibrations</h2>
          <ul className="space-y-3">
            {jobs.map((job) => (
              <li key={job.id}>
                <JobProgress job={job} unit="determinations" />
              </li>
            ))}
          </ul>
        </section>
      ) : null}

      <section aria-labelledby="list-heading" className="space-y-3">
        <h2 id="list-heading">Stored curves</h2>
        <div className="overflow-x-auto">
          <table className="data-table">
            <thead>
              <tr>
                <th scope="col">Curve</th>
                <th scope="col">Kind</th>
                <th scope="col">Version</th>
                <th scope="col" className="text-right">
                  Rows
                </th>
                <th scope="col">Range (cal BP)</th>
                <th scope="col">Citation</th>
                <th scope="col">Active</th>
              </tr>
            </thead>
            <tbody>
              {curves.map((c) => (
                <tr key={c.id}>
                  <td>
                    <span className="font-semibold">{c.displayName}</span>
                  </td>
                  <td>{c.kind}</td>
                  <td>{c.version}</td>
                  <td className="text-right">{groupThousands(c.rowCount)}</td>
                  <td className="whitespace-nowrap">
                    {groupThousands(c.calMaxBp)}–{groupThousands(c.calMinBp)}
                  </td>
                  <td className="max-w-md text-sm">
                    {c.citation}
                    {c.doi ? (
                      <>
                        {" "}
                        <a href={`https://doi.org/${c.doi}`}>doi:{c.doi}</a>
                      </>
                    ) : null}
                  </td>
                  <td>
                    {c.active ? (
                      <span className="rounded border border-ice-500 bg-ice-50 px-1.5 text-sm">active</span>
                    ) : (
                      <ActionButton
                        intent="activate"
                        values={{ curveId: c.id }}
                        className="btn-quiet px-2 py-0.5 text-sm"
                        label={`Activate ${c.displayName} version ${c.version}`}
                      >
                        Activate
                      </ActionButton>
                    )}
                  </td>
                </tr>
              ))}
            </tbody>
          </table>
        </div>
      </section>

      <section aria-labelledby="add-heading" className="max-w-3xl space-y-3">
        <h2 id="add-heading">Add a curve or a new version</h2>
        <p className="text-muted">
          A CSV file with a header naming <code>cal_bp</code>, <code>c14_age</code> and <code>c14_sigma</code> (other columns are
          ignored), the layout of the bundled curves. The file must have rising calendar ages, positive errors and no gap larger
          than the step you give; a file under the name of a bundled curve must reproduce its published values. Up to{" "}
          {formatBytes(maxBytes)}.
        </p>
        <Form method="post" encType="multipart/form-data" className="card space-y-4" {...getFormProps(form)}>
          <input type="hidden" name="intent" value="import" />
          {form.errors?.length ? (
            <p role="alert" className="field-error" id={form.errorId}>
              {form.errors.join(" ")}
            </p>
          ) : null}
          <LabelledField label="Curve file (CSV)" id={fields.file.id} errors={fields.file.errors} errorId={fields.file.errorId}>
            <input {...getInputProps(fields.file, { type: "file" })} accept=".csv,text/csv" className="input" />
          </LabelledField>
          <div className="grid gap-4 sm:grid-cols-2">
            <LabelledField
              label="Short name (used in uploads and the API)"
              id={fields.name.id}
              errors={fields.name.errors}
              errorId={fields.name.errorId}
            >
              <input
                {...getInputProps(fields.name, { type: "text" })}
                className="input"
                placeholder="shcal20"
                autoComplete="off"
              />
            </LabelledField>
            <LabelledField
              label="Display name"
              id={fields.displayName.id}
              errors={fields.displayName.errors}
              errorId={fields.displayName.errorId}
            >
              <input
                {...getInputProps(fields.displayName, { type: "text" })}
                className="input"
                placeholder="SHCal20"
                autoComplete="off"
              />
            </LabelledField>
            <LabelledField label="Kind" id={fields.kind.id} errors={fields.kind.errors} errorId={fields.kind.errorId}>
              <select {...getSelectProps(fields.kind)} className="input">
                <option value="atmospheric">atmospheric</option>
                <option value="marine">marine</option>
              </select>
            </LabelledField>
            <LabelledField label="Version" id={fields.version.id} errors={fields.version.errors} errorId={fields.version.errorId}>
              <input
                {...getInputProps(fields.version, { type: "text" })}
                className="input"
                placeholder="2020"
                autoComplete="off"
              />
            </LabelledField>
            <LabelledField
              label="Largest step between rows, years"
              id={fields.maxStep.id}
              errors={fields.maxStep.errors}
              errorId={fields.maxStep.errorId}
            >
              <input {...getInputProps(fields.maxStep, { type: "number" })} className="input" />
            </LabelledField>
            <LabelledField label="DOI (optional)" id={fields.doi.id} errors={fields.doi.errors} errorId={fields.doi.errorId}>
              <input
                {...getInputProps(fields.doi, { type: "text" })}
                className="input"
                placeholder="10.99999/curve.1"
                autoComplete="off"
              />
            </LabelledField>
          </div>
          <LabelledField
            label="Citation"
            id={fields.citation.id}
            errors={fields.citation.errors}
            errorId={fields.citation.errorId}
          >
            <textarea {...getTextareaProps(fields.citation)} rows={2} className="input" />
          </LabelledField>
          <button type="submit" className="btn" disabled={busy}>
            {busy ? "Checking the file…" : "Add curve"}
          </button>
        </Form>
      </section>
    </div>
  );
}

export function ErrorBoundary({ error }: Route.ErrorBoundaryProps) {
  return <ErrorView error={error} />;
}

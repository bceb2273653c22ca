import { parseWithZod } from "@conform-to/zod/v4";
import { data, Link } from "react-router";
import type { Route } from "./+types/submission-edit";
import { clientAddress, forbidden, requireRole } from "#app/auth/session.server.ts";
import { DeterminationForm } from "#app/components/determination-form/determination-form.tsx";
import { ErrorView } from "#app/components/error-view.tsx";
import { getDb } from "#app/db/client.server.ts";
import { applyChosenSite, formDefaults, isDuplicateLabCode } from "#app/models/submission/form/defaults.server.ts";
import { editRefusal, getDetermination, updateSubmission, withdrawSubmission } from "#app/models/submission/form/write.server.ts";
import {
  formOptions,
  referenceOptions,
  serverSubmissionSchema,
  SubmissionRefused,
} from "#app/models/submission/form/schema.server.ts";
import { redirectWithFlash } from "#app/utils/flash.server.ts";
import { notFound } from "#app/utils/http.server.ts";
import { STATUS_LABELS } from "#app/utils/labels.ts";
import { ActionButton } from "#app/components/ui/action-button.tsx";
import { revalidateUnlessApiCall } from "#app/utils/revalidate.ts";

export const meta: Route.MetaFunction = ({ data }) => [
  { title: data ? `Edit ${data.determination.labCode} · Thawline` : "Edit a determination · Thawline" },
];

const MISSING = "There is no determination with this number.";

function idFrom(params: { id?: string }): number {
  const id = Number(params.id);
  if (!Number.isSafeInteger(id) || id <= 0) notFound(MISSING);
  return id;
}

export async function loader({ request, params }: Route.LoaderArgs) {
  const user = await requireRole(request, "contributor");
  const db = getDb();
  const det = getDetermination(db, idFrom(params)) ?? notFound(MISSING);
  const refusal = editRefusal(det, user.id);
  if (refusal) forbidden(refusal);
  return {
    determination: { id: det.id, labCode: det.labCode, version: det.version, status: det.status },
    options: formOptions(db),
    defaults: formDefaults(db, det),
  };
}

export async function action({ request, params }: Route.ActionArgs) {
  const user = await requireRole(request, "contributor");
  const db = getDb();
  const id = idFrom(params);
  const det = getDetermination(db, id) ?? notFound(MISSING);
  const actor = { userId: user.id, ip: clientAddress(request) };
  const formData = await request.formData();
  const intent = formData.get("intent");
  try {
    switch (intent) {
      case "save": {
        const refusal = editRefusal(det, user.id);
        if (refusal) forbidden(refusal);
        applyChosenSite(db, formData);
        const submission = parseWithZod(formData, { schema: serverSubmissionSchema(db, referenceOptions(db), det) });
        if (submission.status !== "success") return data({ result: submission.reply() }, { status: 400 });
        try {
          const outcome = updateSubmission(db, id, submission.value, actor);
          return redirectWithFlash(
            `/determinations/${id}`,
            outcome.changed
              ? {
                  kind: "success",
                  message: `${submission.value.row.lab_code} is saved as version ${outcome.version} and calibrated again.`,
                }
              : { kind: "info", message: "Nothing was changed." },
          );
        } catch (e) {
          if (isDuplicateLabCode(e)) {
            return data(
              {
                result: submission.reply({
                  fieldErrors: {
                    lab_code: [`Lab code ${submission.value.row.lab_code} was stored by someone else a moment ago; check it.`],
                  },
                }),
              },
              { status: 409 },
            );
          }
          throw e;
        }
      }
      case "withdraw": {
        const withdrawn = withdrawSubmission(db, id, actor);
        return redirectWithFlash("/submissions", {
          kind: "success",
          message: `${withdrawn.labCode} is withdrawn. It stays in the registry's history but is no longer offered to reviewers or modellers.`,
        });
      }
      default:
        return data({ result: undefined, error: "Unknown request." }, { status: 400 });
    }
  } catch (e) {
    if (e instanceof SubmissionRefused) {
      if (e.status === 404) notFound(e.message);
      forbidden(e.message);
    }
    throw e;
  }
}

// The live preview posts to a resource route under /api/; it changes nothing this page loaded.
export const shouldRevalidate = revalidateUnlessApiCall;

export default function EditSubmission({ loaderData, actionData }: Route.ComponentProps) {
  const { determination: d } = loaderData;
  return (
    <div className="grid gap-6">
      <nav aria-label="Breadcrumb" className="text-sm text-muted">
        <Link to="/submissions">My submissions</Link> <span aria-hidden="true">/</span>{" "}
        <Link to={`/determinations/${d.id}`}>{d.labCode}</Link> <span aria-hidden="true">/</span> <span>Edit</span>
      </nav>
      <header className="flex flex-wrap items-end justify-between gap-4">
        <div>
          <h1>Edit {d.labCode}</h1>
          <p className="mt-2 max-w-3xl text-muted">
            Version {d.version}, {STATUS_LABELS[d.status]}. Saving makes version {d.version + 1}, keeps the earlier one in the
            history and calibrates the determination again. Changes are possible until a reviewer grades it.
          </p>
        </div>
        <ActionButton intent="withdraw" className="btn-quiet" confirm={`Withdraw ${d.labCode}? This cannot be undone.`}>
          Withdraw {d.labCode}
        </ActionButton>
      </header>
      {actionData && "error" in actionData && actionData.error ? (
        <p role="alert" className="rounded border border-conflict bg-conflict-bg px-4 py-2 text-conflict">
          {actionData.error}
        </p>
      ) : null}
      <DeterminationForm
        options={loaderData.options}
        defaultValue={loaderData.defaults}
        lastResult={actionData?.result}
        submitLabel="Save changes"
        intent="save"
      />
    </div>
  );
}

export function ErrorBoundary({ error }: Route.ErrorBoundaryProps) {
  return <ErrorView error={error} />;
}

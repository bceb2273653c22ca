import { parseWithZod } from "@conform-to/zod/v4";
import { data, Link } from "react-router";
import type { Route } from "./+types/submit";
import { clientAddress, requireRole } from "#app/auth/session.server.ts";
import { DeterminationForm } from "#app/components/determination-form/determination-form.tsx";
import { ErrorView } from "#app/components/error-view.tsx";
import { getDb } from "#app/db/client.server.ts";
import { applyChosenSite, isDuplicateLabCode, newFormDefaults } from "#app/models/submission/form/defaults.server.ts";
import { createSubmission } from "#app/models/submission/form/write.server.ts";
import {
  formOptions,
  referenceOptions,
  serverSubmissionSchema,
  SubmissionRefused,
} from "#app/models/submission/form/schema.server.ts";
import { redirectWithFlash } from "#app/utils/flash.server.ts";
import { revalidateUnlessApiCall } from "#app/utils/revalidate.ts";

export const meta: Route.MetaFunction = () => [{ title: "Submit a determination · Thawline" }];

export async function loader({ request }: Route.LoaderArgs) {
  const user = await requireRole(request, "contributor");
  const db = getDb();
  const options = formOptions(db);
  return { options, defaults: newFormDefaults(db, user.id, options.siteArea !== null) };
}

export async function action({ request }: Route.ActionArgs) {
  const user = await requireRole(request, "contributor");
  const db = getDb();
  const formData = await request.formData();
  applyChosenSite(db, formData);
  const submission = parseWithZod(formData, { schema: serverSubmissionSchema(db, referenceOptions(db)) });
  if (submission.status !== "success") return data({ result: submission.reply() }, { status: 400 });
  try {
    const created = createSubmission(db, submission.value, { userId: user.id, ip: clientAddress(request) });
    const row = submission.value.row;
    const notes = [
      created.createdSite ? `a new site, ${row.site_name}` : null,
      created.joinedSample ? `added to sample ${row.sample_code}, which was already recorded (its details kept)` : null,
      created.calendarAge ? null : "stored without a calendar age",
    ].filter(Boolean);
    return redirectWithFlash(`/determinations/${created.id}`, {
      kind: "success",
      message: `${row.lab_code} is in the registry${notes.length ? ` (${notes.join("; ")})` : ""}. You can change or withdraw it until a reviewer grades it.`,
    });
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
    if (e instanceof SubmissionRefused)
      return data({ result: submission.reply({ formErrors: [e.message] }) }, { status: e.status });
    throw e;
  }
}

// The live preview posts to a resource route under /api/; it changes nothing this page loaded.
export const shouldRevalidate = revalidateUnlessApiCall;

export default function Submit({ loaderData, actionData }: Route.ComponentProps) {
  return (
    <div className="grid gap-6">
      <header>
        <p className="text-sm tracking-widest text-muted uppercase">Contribute</p>
        <h1 className="mt-1">Submit a determination</h1>
        <p className="mt-2 max-w-3xl text-muted">
          One laboratory measurement with its sample and site. It is checked and calibrated as you type; a reviewer grades it
          later. For many at once, <Link to="/uploads">upload a spreadsheet</Link>. Everything you sent is under{" "}
          <Link to="/submissions">My submissions</Link>.
        </p>
      </header>
      <DeterminationForm
        options={loaderData.options}
        defaultValue={loaderData.defaults}
        lastResult={actionData?.result}
        submitLabel="Submit determination"
      />
    </div>
  );
}

export function ErrorBoundary({ error }: Route.ErrorBoundaryProps) {
  return <ErrorView error={error} />;
}

import { data, Form, Link, redirect } from "react-router";
import { parseWithZod } from "@conform-to/zod/v4";
import type { Route } from "./+types/submission-answer";
import { clientAddress, requireRole } from "#app/auth/session.server.ts";
import { ErrorView } from "#app/components/error-view.tsx";
import { getDb } from "#app/db/client.server.ts";
import { answerQuestion, determinationForAnswer, reviewMessages, ReviewRefused } from "#app/models/review/reviews.server.ts";
import { answerSchema } from "#app/utils/review-forms.ts";
import { notFound } from "#app/utils/http.server.ts";

export const meta: Route.MetaFunction = () => [{ title: "Answer a reviewer · Thawline" }];

function own(userId: number, idParam: string | undefined) {
  const id = Number(idParam);
  const det = Number.isSafeInteger(id) ? determinationForAnswer(getDb(), id) : null;
  // Another contributor's determination looks exactly like a missing one.
  if (!det || det.contributorId !== userId) notFound("There is no such determination among your submissions.");
  return det;
}

export async function loader({ request, params }: Route.LoaderArgs) {
  const user = await requireRole(request, "contributor");
  const det = own(user.id, params.id);
  return { det, messages: reviewMessages(getDb(), det.id) };
}

export async function action({ request, params }: Route.ActionArgs) {
  const user = await requireRole(request, "contributor");
  const det = own(user.id, params.id);
  const submission = parseWithZod(await request.formData(), { schema: answerSchema });
  if (submission.status !== "success") return data({ result: submission.reply(), error: null }, { status: 400 });
  try {
    answerQuestion(getDb(), det.id, submission.value.answer, { userId: user.id, ip: clientAddress(request) });
  } catch (e) {
    if (e instanceof ReviewRefused) return data({ result: null, error: e.message }, { status: e.status });
    throw e;
  }
  return redirect("/submissions");
}

export default function SubmissionAnswer({ loaderData, actionData }: Route.ComponentProps) {
  const { det, messages } = loaderData;
  const fieldError = actionData?.result && "error" in actionData.result ? actionData.result.error?.answer : undefined;
  return (
    <article className="max-w-2xl">
      <nav aria-label="Breadcrumb" className="text-sm text-muted">
        <Link to="/submissions">My submissions</Link> <span aria-hidden="true">/</span> <span>{det.labCode}</span>
      </nav>
      <h1 className="mt-2">Questions about {det.labCode}</h1>
      <ul className="mt-4 grid gap-2">
        {messages.map((m) => (
          <li key={m.id} className="card">
            <p className="text-sm text-muted">{m.authorName}</p>
            <p>{m.body}</p>
          </li>
        ))}
      </ul>
      {actionData?.error ? (
        <p role="alert" className="mt-4 rounded border border-conflict bg-conflict-bg p-3 text-conflict">
          {actionData.error}
        </p>
      ) : null}
      {det.status === "awaiting_answer" ? (
        <Form method="post" className="card mt-4 grid gap-3">
          <div className="field">
            <label htmlFor="answer">Your answer</label>
            <textarea
              id="answer"
              name="answer"
              className="input"
              rows={4}
              required
              aria-invalid={fieldError ? true : undefined}
            />
            {fieldError ? <p className="text-sm text-conflict">{fieldError.join(" ")}</p> : null}
          </div>
          <p className="text-sm text-muted">
            You may also <Link to={`/submissions/${det.id}/edit`}>correct the determination</Link> before answering. The answer
            returns it to the review queue.
          </p>
          <div>
            <button type="submit" className="btn">
              Send answer
            </button>
          </div>
        </Form>
      ) : (
        <p className="mt-4 text-muted">Nothing is waiting for your answer on this determination.</p>
      )}
    </article>
  );
}

export function ErrorBoundary({ error }: Route.ErrorBoundaryProps) {
  return <ErrorView error={error} />;
}

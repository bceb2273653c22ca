import { data, Form, Link, redirect } from "react-router";
import type { Route } from "./+types/sign-in.link";
import { ErrorView } from "#app/components/error-view.tsx";
import { getOptionalUser } from "#app/auth/session.server.ts";
import { completeSignIn, signInState } from "#app/auth/sign-in.server.ts";

export const meta: Route.MetaFunction = () => [{ title: "Finish signing in — Thawline" }];

/*
 * The magic link lands here. Opening it changes nothing (GET never does, and mail scanners
 * open links too); the page asks for one click, which posts the link's token back.
 */
export async function loader({ request }: Route.LoaderArgs) {
  // Public page: the link is for signed-out visitors; a signed-in person is sent on.
  if (await getOptionalUser(request)) throw redirect("/");
  const token = new URL(request.url).searchParams.get("t") ?? "";
  const state = await signInState(request);
  return { token, email: state.email };
}

export async function action({ request }: Route.ActionArgs) {
  // Public action: completes a sign-in started in this browser; tries per code are limited.
  const formData = await request.formData();
  const token = String(formData.get("t") ?? "");
  if (!token) return data({ error: "This link is incomplete. Copy the whole link, or type the code instead." }, { status: 400 });
  const outcome = await completeSignIn(request, { linkToken: token });
  if (outcome instanceof Response) return outcome;
  return data({ error: outcome.error }, { status: outcome.status });
}

export default function FinishSignIn({ loaderData, actionData }: Route.ComponentProps) {
  const { token, email } = loaderData;
  return (
    <section className="card mx-auto max-w-md">
      <h1>Finish signing in</h1>
      {actionData?.error ? (
        <p role="alert" className="mt-4 rounded border border-conflict bg-conflict-bg px-4 py-2 text-conflict">
          {actionData.error}
        </p>
      ) : null}
      {email && token ? (
        <>
          <p className="mt-3">
            Sign in to Thawline as <strong>{email}</strong>?
          </p>
          <Form method="post" className="mt-6">
            <input type="hidden" name="t" value={token} />
            <button type="submit" className="btn" autoFocus>
              Sign in
            </button>
          </Form>
        </>
      ) : (
        <p className="mt-3">
          This link works only in the browser where the code was asked for, and only for ten minutes. Open it there, type the code
          from the message instead, or <Link to="/sign-in">ask for a new code</Link>.
        </p>
      )}
    </section>
  );
}

export function ErrorBoundary({ error }: Route.ErrorBoundaryProps) {
  return <ErrorView error={error} />;
}

import { type SubmissionResult, getFormProps, getInputProps, useForm } from "@conform-to/react";
import { parseWithZod } from "@conform-to/zod/v4";
import { data, Form, redirect, useNavigation } from "react-router";
import { z } from "zod";
import type { Route } from "./+types/sign-in";
import { ErrorView } from "#app/components/error-view.tsx";
import { getOptionalUser } from "#app/auth/session.server.ts";
import { CODE_MINUTES, completeSignIn, requestCode, restartSignIn, safeRedirect, signInState } from "#app/auth/sign-in.server.ts";
import { devOutboxOpen } from "#app/utils/env.server.ts";
import { FieldErrors } from "#app/components/ui/field-errors.tsx";

export const meta: Route.MetaFunction = () => [{ title: "Sign in — Thawline" }];

const RequestCodeSchema = z.object({
  email: z.email({ error: "Enter an e-mail address such as name@example.org." }).max(254),
  redirectTo: z.string().optional(),
});

const CodeSchema = z.object({
  code: z
    .string({ error: "Enter the code from the message." })
    .trim()
    .regex(/^[A-Za-z0-9\s-]{6,12}$/, "The code has six letters and digits."),
});

export async function loader({ request }: Route.LoaderArgs) {
  // Public page: signing in is for signed-out visitors; a signed-in person is sent on.
  const url = new URL(request.url);
  const redirectTo = safeRedirect(url.searchParams.get("redirectTo"));
  if (await getOptionalUser(request)) throw redirect(redirectTo);
  const state = await signInState(request);
  return {
    pendingEmail: state.email,
    error: state.error,
    redirectTo,
    suggestedEmail: (url.searchParams.get("email") ?? "").slice(0, 254),
    showOutbox: devOutboxOpen(),
    codeMinutes: CODE_MINUTES,
  };
}

export async function action({ request }: Route.ActionArgs) {
  // Public action: requesting and entering codes is how one signs in. Abuse limits (per address,
  // per client, tries per code) and the honeypot are applied here and in sign-in.server.ts.
  // What the form echoes back (Conform's reply carries the typed values) is capped: an address
  // longer than any real one is cut before it is checked, so the answer never grows with the input.
  const formData = new FormData();
  for (const [key, value] of await request.formData()) formData.append(key, typeof value === "string" ? value.slice(0, 320) : "");
  const intent = formData.get("intent");
  switch (intent) {
    case "request": {
      // A filled-in honeypot is a robot: answer as if a code had been sent and do nothing.
      if (String(formData.get("website") ?? "") !== "") return redirect("/sign-in");
      const submission = parseWithZod(formData, { schema: RequestCodeSchema });
      if (submission.status !== "success") {
        return data({ intent, result: submission.reply(), error: null }, { status: 400 });
      }
      const outcome = await requestCode(request, submission.value);
      if (outcome instanceof Response) return outcome;
      return data({ intent, result: submission.reply(), error: outcome.error }, { status: outcome.status });
    }
    case "verify": {
      const submission = parseWithZod(formData, { schema: CodeSchema });
      if (submission.status !== "success") {
        return data({ intent, result: submission.reply(), error: null }, { status: 400 });
      }
      const outcome = await completeSignIn(request, { code: submission.value.code });
      if (outcome instanceof Response) return outcome;
      return data({ intent, result: submission.reply(), error: outcome.error }, { status: outcome.status });
    }
    case "restart":
      return restartSignIn();
    default:
      return data({ intent: null, result: undefined, error: "Unknown request." }, { status: 400 });
  }
}

export default function SignIn({ loaderData, actionData }: Route.ComponentProps) {
  const { pendingEmail, redirectTo, suggestedEmail, showOutbox, codeMinutes } = loaderData;
  const error = actionData?.error ?? loaderData.error;
  return (
    <div className="mx-auto max-w-md">
      {pendingEmail ? (
        <CodeStep
          email={pendingEmail}
          minutes={codeMinutes}
          error={error}
          lastResult={actionData?.intent === "verify" ? actionData.result : undefined}
        />
      ) : (
        <EmailStep
          redirectTo={redirectTo}
          suggestedEmail={suggestedEmail}
          error={error}
          lastResult={actionData?.intent === "request" ? actionData.result : undefined}
        />
      )}
      {showOutbox ? (
        <p className="mt-6 rounded border border-ice-200 bg-ice-50 px-4 py-3 text-sm">
          This installation does not deliver mail: messages are kept in the <a href="/dev/outbox">development outbox</a>.
        </p>
      ) : null}
    </div>
  );
}

type LastResult = SubmissionResult<string[]> | null | undefined;

function ErrorNote({ message }: { message: string | null | undefined }) {
  if (!message) return null;
  return (
    <p role="alert" className="mt-4 rounded border border-conflict bg-conflict-bg px-4 py-2 text-conflict">
      {message}
    </p>
  );
}

function EmailStep(props: { redirectTo: string; suggestedEmail: string; error: string | null; lastResult: LastResult }) {
  const navigation = useNavigation();
  const [form, fields] = useForm<z.input<typeof RequestCodeSchema>, z.output<typeof RequestCodeSchema>, string[]>({
    id: "request-code",
    lastResult: props.lastResult,
    defaultValue: { email: props.suggestedEmail },
    shouldValidate: "onBlur",
    onValidate: ({ formData }) => parseWithZod(formData, { schema: RequestCodeSchema }),
  });
  const busy = navigation.state !== "idle" && navigation.formData?.get("intent") === "request";
  return (
    <section className="card">
      <h1>Sign in</h1>
      <p className="mt-3 text-muted">
        Thawline has no passwords. Enter your address and we will e-mail you a one-time code and a link. Only invited people can
        sign in.
      </p>
      <ErrorNote message={props.error} />
      <Form method="post" {...getFormProps(form)} className="mt-6 grid gap-4">
        <input type="hidden" name="intent" value="request" />
        <input type="hidden" name="redirectTo" value={props.redirectTo} />
        <div className="field">
          <label htmlFor={fields.email.id}>E-mail address</label>
          <input {...getInputProps(fields.email, { type: "email" })} className="input" autoComplete="email" autoFocus required />
          <FieldErrors id={fields.email.errorId} errors={fields.email.errors} />
        </div>
        {/* Honeypot: hidden from people and assistive technology; robots fill it in. */}
        <div aria-hidden="true" className="absolute -left-[9999px] h-px w-px overflow-hidden">
          <label htmlFor="website">Leave this field empty</label>
          <input id="website" name="website" type="text" tabIndex={-1} autoComplete="off" defaultValue="" />
        </div>
        <div>
          <button type="submit" className="btn" disabled={busy}>
            {busy ? "Sending…" : "E-mail me a code"}
          </button>
        </div>
      </Form>
    </section>
  );
}

function CodeStep(props: { email: string; minutes: number; error: string | null; lastResult: LastResult }) {
  const navigation = useNavigation();
  const [form, fields] = useForm<z.input<typeof CodeSchema>, z.output<typeof CodeSchema>, string[]>({
    id: "enter-code",
    lastResult: props.lastResult,
    shouldValidate: "onSubmit",
    onValidate: ({ formData }) => parseWithZod(formData, { schema: CodeSchema }),
  });
  const busy = navigation.state !== "idle" && navigation.formData?.get("intent") === "verify";
  return (
    <section className="card">
      <h1>Check your mail</h1>
      <p className="mt-3">
        If <strong>{props.email}</strong> belongs to someone invited to Thawline, a message with a sign-in code and a link is on
        its way. Both work for {props.minutes} minutes, in this browser.
      </p>
      <ErrorNote message={props.error} />
      <Form method="post" {...getFormProps(form)} className="mt-6 grid gap-4">
        <input type="hidden" name="intent" value="verify" />
        <div className="field">
          <label htmlFor={fields.code.id}>Code from the message</label>
          <input
            {...getInputProps(fields.code, { type: "text" })}
            className="input font-mono text-xl tracking-[0.3em] uppercase"
            autoComplete="one-time-code"
            autoCapitalize="characters"
            spellCheck={false}
            autoFocus
            required
          />
          <FieldErrors id={fields.code.errorId} errors={fields.code.errors} />
        </div>
        <div>
          <button type="submit" className="btn" disabled={busy}>
            {busy ? "Checking…" : "Sign in"}
          </button>
        </div>
      </Form>
      <div className="mt-6 flex flex-wrap gap-3 border-t border-rule pt-4 text-sm">
        <Form method="post">
          <input type="hidden" name="intent" value="request" />
          <input type="hidden" name="email" value={props.email} />
          <button type="submit" className="btn-quiet">
            Send a new code
          </button>
        </Form>
        <Form method="post">
          <input type="hidden" name="intent" value="restart" />
          <button type="submit" className="btn-quiet">
            Use another address
          </button>
        </Form>
      </div>
    </section>
  );
}

export function ErrorBoundary({ error }: Route.ErrorBoundaryProps) {
  return <ErrorView error={error} />;
}

import { type SubmissionResult, getFormProps, getInputProps, useForm } from "@conform-to/react";
import { parseWithZod } from "@conform-to/zod/v4";
import { useEffect, useRef, useState } from "react";
import { data, Form, useNavigation } from "react-router";
import { z } from "zod";
import type { Route } from "./+types/account";
import { ErrorView } from "#app/components/error-view.tsx";
import { getDb } from "#app/db/client.server.ts";
import { clientAddress, destroySession, requireUser } from "#app/auth/session.server.ts";
import {
  describeUserAgent,
  listActiveSessions,
  revokeOtherSessions,
  revokeSession,
} from "#app/models/accounts/sessions.server.ts";
import { createToken, listTokens, revokeToken } from "#app/models/accounts/tokens.server.ts";
import { env } from "#app/utils/env.server.ts";
import { redirectWithFlash } from "#app/utils/flash.server.ts";
import { formatTimestamp } from "#app/utils/time-format.ts";
import { ActionButton } from "#app/components/ui/action-button.tsx";
import { FieldErrors } from "#app/components/ui/field-errors.tsx";

export const meta: Route.MetaFunction = () => [{ title: "Your account — Thawline" }];

const TokenSchema = z.object({
  label: z
    .string({ error: "Give the token a name, such as the script or machine that will use it." })
    .trim()
    .min(1, "Give the token a name, such as the script or machine that will use it.")
    .max(100, "Keep the name under 100 characters."),
});

export async function loader({ request }: Route.LoaderArgs) {
  // Any signed-in person: their own account only.
  const user = await requireUser(request);
  const db = getDb();
  const sessions = listActiveSessions(db, user.id, user.sessionId).map((s) => ({
    handle: s.handle,
    current: s.current,
    browser: describeUserAgent(s.userAgent),
    ip: s.ip,
    createdAt: formatTimestamp(s.createdAt),
    expiresAt: formatTimestamp(s.expiresAt),
  }));
  const tokens = listTokens(db, user.id).map((t) => ({
    id: t.id,
    label: t.label,
    prefix: t.prefix,
    createdAt: formatTimestamp(t.createdAt),
    lastUsedAt: formatTimestamp(t.lastUsedAt),
    revokedAt: formatTimestamp(t.revokedAt),
  }));
  return {
    person: { name: user.name, email: user.email, roles: user.roles },
    sessions,
    tokens,
    apiBase: env().APP_URL ?? new URL(request.url).origin,
  };
}

export async function action({ request }: Route.ActionArgs) {
  // Any signed-in person, acting on their own sessions and tokens only.
  const user = await requireUser(request);
  const db = getDb();
  const actor = { actorId: user.id, ip: clientAddress(request) };
  const formData = await request.formData();
  const intent = formData.get("intent");
  switch (intent) {
    case "create-token": {
      const submission = parseWithZod(formData, { schema: TokenSchema });
      if (submission.status !== "success") {
        return data({ intent, result: submission.reply(), newToken: null }, { status: 400 });
      }
      const created = createToken(db, user.id, submission.value.label, actor);
      // The plain token is answered once, in this response, and never stored: no redirect here.
      return data({
        intent,
        result: submission.reply({ resetForm: true }),
        newToken: { token: created.token, label: submission.value.label },
      });
    }
    case "revoke-token": {
      const tokenId = Number(formData.get("tokenId"));
      if (!Number.isInteger(tokenId) || !revokeToken(db, user.id, tokenId, actor)) {
        return data({ intent, result: undefined, newToken: null, error: "No such token." }, { status: 404 });
      }
      return redirectWithFlash("/account", { kind: "success", message: "The token is revoked; it no longer works." });
    }
    case "revoke-session": {
      const handle = String(formData.get("session") ?? "");
      const outcome = revokeSession(db, user.id, handle, user.sessionId, actor);
      if (!outcome) return data({ intent, result: undefined, newToken: null, error: "No such session." }, { status: 404 });
      if (outcome.wasCurrent) {
        return redirectWithFlash(
          "/",
          { kind: "info", message: "You are signed out." },
          {
            headers: { "Set-Cookie": await destroySession(request) },
          },
        );
      }
      return redirectWithFlash("/account", { kind: "success", message: "That session is ended." });
    }
    case "revoke-other-sessions": {
      if (!user.sessionId)
        return data({ intent, result: undefined, newToken: null, error: "No current session." }, { status: 400 });
      const ended = revokeOtherSessions(db, user.id, user.sessionId, actor);
      return redirectWithFlash("/account", {
        kind: "success",
        message: ended === 1 ? "1 other session is ended." : `${ended} other sessions are ended.`,
      });
    }
    default:
      return data({ intent: null, result: undefined, newToken: null, error: "Unknown request." }, { status: 400 });
  }
}

export default function Account({ loaderData, actionData }: Route.ComponentProps) {
  const { person, sessions, tokens, apiBase } = loaderData;
  const liveTokens = tokens.filter((t) => !t.revokedAt);
  const revokedTokens = tokens.filter((t) => t.revokedAt);
  const error = actionData && "error" in actionData ? actionData.error : null;
  return (
    <div className="grid gap-10">
      <header>
        <p className="text-sm tracking-widest text-muted uppercase">Your account</p>
        <h1 className="mt-1">{person.name}</h1>
        <p className="mt-2 text-muted">
          {person.email} · {person.roles.length ? person.roles.join(", ") : "no roles yet"}
        </p>
      </header>
      {error ? (
        <p role="alert" className="rounded border border-conflict bg-conflict-bg px-4 py-2 text-conflict">
          {error}
        </p>
      ) : null}

      <section aria-labelledby="sessions-heading">
        <div className="flex flex-wrap items-baseline justify-between gap-3">
          <h2 id="sessions-heading">Where you are signed in</h2>
          {sessions.length > 1 ? (
            <ActionButton intent="revoke-other-sessions" className="btn-quiet text-sm">
              Sign out everywhere else
            </ActionButton>
          ) : null}
        </div>
        <table className="data-table mt-4">
          <thead>
            <tr>
              <th scope="col">Browser</th>
              <th scope="col">Address</th>
              <th scope="col">Signed in</th>
              <th scope="col">Expires</th>
              <th scope="col">
                <span className="sr-only">Actions</span>
              </th>
            </tr>
          </thead>
          <tbody>
            {sessions.map((s) => (
              <tr key={s.handle}>
                <td>
                  {s.browser}
                  {s.current ? <span className="ml-2 rounded bg-ice-100 px-2 py-0.5 text-sm">this browser</span> : null}
                </td>
                <td className="font-mono text-sm">{s.ip ?? "—"}</td>
                <td>{s.createdAt}</td>
                <td>{s.expiresAt}</td>
                <td className="text-right">
                  <ActionButton intent="revoke-session" values={{ session: s.handle }}>
                    {s.current ? "Sign out here" : "End session"}
                  </ActionButton>
                </td>
              </tr>
            ))}
          </tbody>
        </table>
      </section>

      <section aria-labelledby="tokens-heading" className="grid gap-4">
        <h2 id="tokens-heading">API tokens</h2>
        <p className="max-w-3xl text-muted">
          A personal token lets your scripts use the Thawline API as you, with your roles. Send it as{" "}
          <code className="font-mono text-sm">Authorization: Bearer &lt;token&gt;</code>. Revoke a token as soon as you no longer
          need it.
        </p>
        {actionData?.newToken ? (
          <NewToken token={actionData.newToken.token} label={actionData.newToken.label} apiBase={apiBase} />
        ) : null}
        <CreateTokenForm lastResult={actionData?.intent === "create-token" ? actionData.result : undefined} />
        {liveTokens.length === 0 ? (
          <p className="rounded border border-dashed border-rule px-4 py-6 text-center text-muted">You have no API tokens.</p>
        ) : (
          <table className="data-table">
            <thead>
              <tr>
                <th scope="col">Name</th>
                <th scope="col">Starts with</th>
                <th scope="col">Created</th>
                <th scope="col">Last used</th>
                <th scope="col">
                  <span className="sr-only">Actions</span>
                </th>
              </tr>
            </thead>
            <tbody>
              {liveTokens.map((t) => (
                <tr key={t.id}>
                  <td>{t.label}</td>
                  <td className="font-mono text-sm">{t.prefix}…</td>
                  <td>{t.createdAt}</td>
                  <td>{t.lastUsedAt ?? "never"}</td>
                  <td className="text-right">
                    <ActionButton intent="revoke-token" values={{ tokenId: t.id }} label={`Revoke token ${t.label}`}>
                      Revoke
                    </ActionButton>
                  </td>
                </tr>
              ))}
            </tbody>
          </table>
        )}
        {revokedTokens.length > 0 ? (
          <details className="text-sm text-muted">
            <summary>Revoked tokens ({revokedTokens.length})</summary>
            <ul className="mt-2 grid gap-1">
              {revokedTokens.map((t) => (
                <li key={t.id}>
                  {t.label} <span className="font-mono">{t.prefix}…</span>, revoked {t.revokedAt}
                </li>
              ))}
            </ul>
          </details>
        ) : null}
      </section>
    </div>
  );
}

type LastResult = SubmissionResult<string[]> | null | undefined;

function CreateTokenForm({ lastResult }: { lastResult: LastResult }) {
  const navigation = useNavigation();
  const [form, fields] = useForm<z.input<typeof TokenSchema>, z.output<typeof TokenSchema>, string[]>({
    id: "create-token",
    lastResult,
    shouldValidate: "onBlur",
    onValidate: ({ formData }) => parseWithZod(formData, { schema: TokenSchema }),
  });
  const busy = navigation.state !== "idle" && navigation.formData?.get("intent") === "create-token";
  return (
    <Form method="post" {...getFormProps(form)} className="flex flex-wrap items-end gap-3">
      <input type="hidden" name="intent" value="create-token" />
      <div className="field min-w-72">
        <label htmlFor={fields.label.id}>Name of a new token</label>
        <input {...getInputProps(fields.label, { type: "text" })} className="input" placeholder="e.g. cluster scripts" />
        <FieldErrors id={fields.label.errorId} errors={fields.label.errors} />
      </div>
      <button type="submit" className="btn" disabled={busy}>
        Create token
      </button>
    </Form>
  );
}

function NewToken({ token, label, apiBase }: { token: string; label: string; apiBase: string }) {
  const [copied, setCopied] = useState(false);
  const ref = useRef<HTMLElement>(null);
  useEffect(() => ref.current?.focus(), [token]);
  return (
    <section ref={ref} tabIndex={-1} role="status" aria-labelledby="new-token-heading" className="card border-ice-400 bg-ice-50">
      <h3 id="new-token-heading" className="font-semibold">
        Your new token “{label}”
      </h3>
      <p className="mt-1 text-sm">Copy it now: it is shown only this once and cannot be recovered.</p>
      <div className="mt-3 flex flex-wrap items-center gap-3">
        <code data-testid="new-token" className="rounded border border-rule bg-white px-3 py-1.5 font-mono text-sm break-all">
          {token}
        </code>
        <button
          type="button"
          className="btn-quiet text-sm"
          onClick={() => {
            void navigator.clipboard?.writeText(token).then(() => setCopied(true));
          }}
        >
          {copied ? "Copied" : "Copy"}
        </button>
      </div>
      <p className="mt-3 text-sm">Try it:</p>
      <pre className="mt-1 overflow-x-auto rounded bg-white p-3 font-mono text-xs">
        curl -H "Authorization: Bearer {token}" {apiBase}/api/v1/me
      </pre>
    </section>
  );
}

export function ErrorBoundary({ error }: Route.ErrorBoundaryProps) {
  return <ErrorView error={error} />;
}

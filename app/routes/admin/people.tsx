import { type SubmissionResult, getCollectionProps, getFormProps, getInputProps, useForm } from "@conform-to/react";
import { parseWithZod } from "@conform-to/zod/v4";
import { data, Form, useNavigation } from "react-router";
import { z } from "zod";
import type { Route } from "./+types/people";
import { ErrorView } from "#app/components/error-view.tsx";
import { getDb } from "#app/db/client.server.ts";
import type { Role } from "#app/db/schema.ts";
import { clientAddress, requireRole } from "#app/auth/session.server.ts";
import { sendEmail } from "#app/mail/send.server.ts";
import { invitationMessage } from "#app/mail/templates.server.ts";
import { findUserByEmail, getPerson, inviteUser, listPeople, setActive, setRoles } from "#app/models/accounts/users.server.ts";
import { env } from "#app/utils/env.server.ts";
import { redirectWithFlash } from "#app/utils/flash.server.ts";
import { ROLE_ORDER, ROLE_WORDS } from "#app/utils/roles.ts";
import { formatTimestamp } from "#app/utils/time-format.ts";
import { ActionButton } from "#app/components/ui/action-button.tsx";
import { FieldErrors } from "#app/components/ui/field-errors.tsx";

export const meta: Route.MetaFunction = () => [{ title: "People — Thawline" }];

const roleEnum = z.enum(ROLE_ORDER as [Role, ...Role[]]);

function inviteSchema(isTaken?: (email: string) => string | null) {
  return z
    .object({
      name: z
        .string({ error: "Enter the person's name." })
        .trim()
        .min(1, "Enter the person's name.")
        .max(120, "Keep the name under 120 characters."),
      email: z.email({ error: "Enter an e-mail address such as name@example.org." }).max(254),
      roles: z.array(roleEnum, { error: "Choose at least one role." }).min(1, "Choose at least one role."),
    })
    .superRefine((value, ctx) => {
      const owner = isTaken?.(value.email);
      if (owner) ctx.addIssue({ code: "custom", path: ["email"], message: `This address already belongs to ${owner}.` });
    });
}

const RolesSchema = z.object({
  userId: z.coerce.number().int().positive(),
  roles: z.array(roleEnum).default([]),
});

const PersonSchema = z.object({ userId: z.coerce.number().int().positive() });

export async function loader({ request }: Route.LoaderArgs) {
  // Editors only.
  const me = await requireRole(request, "editor");
  const people = listPeople(getDb()).map((p) => ({
    id: p.id,
    name: p.name,
    email: p.email,
    active: p.active,
    roles: p.roles,
    lastSignInAt: formatTimestamp(p.lastSignInAt),
    invitedAt: formatTimestamp(p.createdAt),
  }));
  return { people, meId: me.id };
}

export async function action({ request }: Route.ActionArgs) {
  // Editors only.
  const me = await requireRole(request, "editor");
  const db = getDb();
  const actor = { actorId: me.id, ip: clientAddress(request) };
  const formData = await request.formData();
  const intent = formData.get("intent");
  switch (intent) {
    case "invite": {
      const submission = parseWithZod(formData, {
        schema: inviteSchema((email) => findUserByEmail(db, email)?.name ?? null),
      });
      if (submission.status !== "success") return data({ intent, result: submission.reply(), rowError: null }, { status: 400 });
      const { name, email, roles } = submission.value;
      inviteUser(db, { name, email, roles }, actor);
      const base = env().APP_URL ?? new URL(request.url).origin;
      const signInUrl = `${base}/sign-in?email=${encodeURIComponent(email.trim().toLowerCase())}`;
      try {
        await sendEmail({
          to: email.trim().toLowerCase(),
          ...invitationMessage({ name, invitedBy: me.name, roles, signInUrl }),
          tags: [{ name: "kind", value: "invitation" }],
        });
      } catch (error) {
        return redirectWithFlash("/people", {
          kind: "error",
          message: `${name} is invited, but the invitation could not be sent (${error instanceof Error ? error.message : "mail failed"}). They can still sign in at /sign-in.`,
        });
      }
      return redirectWithFlash("/people", {
        kind: "success",
        message: `${name} is invited; an invitation is on its way to ${email}.`,
      });
    }
    case "set-roles": {
      const submission = parseWithZod(formData, { schema: RolesSchema });
      if (submission.status !== "success") return data({ intent, result: undefined, rowError: null }, { status: 400 });
      const { userId, roles } = submission.value;
      const person = getPerson(db, userId);
      if (!person) return data({ intent, result: undefined, rowError: { userId, message: "No such person." } }, { status: 404 });
      if (userId === me.id && !roles.includes("editor")) {
        return data(
          {
            intent,
            result: undefined,
            rowError: { userId, message: "You cannot remove your own editor role; ask another editor." },
          },
          { status: 400 },
        );
      }
      const changed = setRoles(db, userId, roles, actor);
      return redirectWithFlash("/people", {
        kind: "success",
        message: changed
          ? `${person.name}'s roles are now: ${roles.length ? roles.join(", ") : "none"}.`
          : `${person.name}'s roles are unchanged.`,
      });
    }
    case "deactivate":
    case "reactivate": {
      const submission = parseWithZod(formData, { schema: PersonSchema });
      if (submission.status !== "success") return data({ intent, result: undefined, rowError: null }, { status: 400 });
      const { userId } = submission.value;
      const person = getPerson(db, userId);
      if (!person) return data({ intent, result: undefined, rowError: { userId, message: "No such person." } }, { status: 404 });
      if (userId === me.id) {
        return data(
          { intent, result: undefined, rowError: { userId, message: "You cannot deactivate yourself." } },
          { status: 400 },
        );
      }
      const active = intent === "reactivate";
      setActive(db, userId, active, actor);
      return redirectWithFlash("/people", {
        kind: "success",
        message: active
          ? `${person.name} can sign in again.`
          : `${person.name} is deactivated: their sessions have ended and their API tokens no longer work.`,
      });
    }
    default:
      return data({ intent: null, result: undefined, rowError: null }, { status: 400 });
  }
}

export default function People({ loaderData, actionData }: Route.ComponentProps) {
  const { people, meId } = loaderData;
  const rowError = actionData?.rowError ?? null;
  const active = people.filter((p) => p.active).length;
  return (
    <div className="grid gap-10">
      <header>
        <h1>People</h1>
        <p className="mt-2 max-w-3xl text-muted">
          Everyone who may sign in, with their roles. {active} active, {people.length - active} deactivated. A deactivated
          person's sessions end at once and their API tokens are revoked (reactivating brings none back).
        </p>
      </header>

      <InviteForm lastResult={actionData?.intent === "invite" ? actionData.result : undefined} />

      <section aria-labelledby="people-heading">
        <h2 id="people-heading">Everyone</h2>
        {people.length === 0 ? (
          <p className="mt-4 rounded border border-dashed border-rule px-4 py-6 text-center text-muted">Nobody yet.</p>
        ) : (
          <table className="data-table mt-4">
            <thead>
              <tr>
                <th scope="col">Name</th>
                <th scope="col">Roles</th>
                <th scope="col">Status</th>
                <th scope="col">Last signed in</th>
                <th scope="col">
                  <span className="sr-only">Actions</span>
                </th>
              </tr>
            </thead>
            <tbody>
              {people.map((p) => (
                <tr key={p.id} className={p.active ? undefined : "text-muted"}>
                  <td>
                    <div className="font-semibold">
                      {p.name}
                      {p.id === meId ? <span className="ml-2 text-sm font-normal text-muted">(you)</span> : null}
                    </div>
                    <div className="text-sm text-muted">{p.email}</div>
                  </td>
                  <td>
                    <Form method="post" className="flex flex-wrap items-center gap-x-4 gap-y-1">
                      <input type="hidden" name="intent" value="set-roles" />
                      <input type="hidden" name="userId" value={p.id} />
                      <fieldset className="flex flex-wrap gap-x-4 gap-y-1">
                        <legend className="sr-only">Roles of {p.name}</legend>
                        {ROLE_ORDER.map((role) => (
                          <label key={role} className="inline-flex items-center gap-1.5 text-sm">
                            <input type="checkbox" name="roles" value={role} defaultChecked={p.roles.includes(role)} />
                            {ROLE_WORDS[role].label}
                          </label>
                        ))}
                      </fieldset>
                      <button type="submit" className="btn-quiet py-0.5 text-sm" aria-label={`Save roles of ${p.name}`}>
                        Save roles
                      </button>
                    </Form>
                    {rowError?.userId === p.id ? (
                      <p role="alert" className="field-error mt-1">
                        {rowError.message}
                      </p>
                    ) : null}
                  </td>
                  <td>{p.active ? "Active" : "Deactivated"}</td>
                  <td>{p.lastSignInAt ?? "never"}</td>
                  <td className="text-right">
                    {p.id === meId ? null : (
                      <ActionButton
                        intent={p.active ? "deactivate" : "reactivate"}
                        values={{ userId: p.id }}
                        label={`${p.active ? "Deactivate" : "Reactivate"} ${p.name}`}
                      >
                        {p.active ? "Deactivate" : "Reactivate"}
                      </ActionButton>
                    )}
                  </td>
                </tr>
              ))}
            </tbody>
          </table>
        )}
      </section>
    </div>
  );
}

type LastResult = SubmissionResult<string[]> | null | undefined;

function InviteForm({ lastResult }: { lastResult: LastResult }) {
  const navigation = useNavigation();
  const [form, fields] = useForm<z.input<ReturnType<typeof inviteSchema>>, z.output<ReturnType<typeof inviteSchema>>, string[]>({
    id: "invite",
    lastResult,
    shouldValidate: "onBlur",
    shouldRevalidate: "onInput",
    onValidate: ({ formData }) => parseWithZod(formData, { schema: inviteSchema() }),
  });
  const busy = navigation.state !== "idle" && navigation.formData?.get("intent") === "invite";
  return (
    <section aria-labelledby="invite-heading" className="card max-w-3xl">
      <h2 id="invite-heading">Invite someone</h2>
      <p className="mt-1 text-sm text-muted">They get an e-mail telling them how to sign in; there is no password to set.</p>
      <Form method="post" {...getFormProps(form)} className="mt-4 grid gap-4 sm:grid-cols-2">
        <input type="hidden" name="intent" value="invite" />
        <div className="field">
          <label htmlFor={fields.name.id}>Name</label>
          <input {...getInputProps(fields.name, { type: "text" })} className="input" autoComplete="off" />
          <FieldErrors id={fields.name.errorId} errors={fields.name.errors} />
        </div>
        <div className="field">
          <label htmlFor={fields.email.id}>E-mail address</label>
          <input {...getInputProps(fields.email, { type: "email" })} className="input" autoComplete="off" />
          <FieldErrors id={fields.email.errorId} errors={fields.email.errors} />
        </div>
        <fieldset className="sm:col-span-2" aria-describedby={fields.roles.errors ? fields.roles.errorId : undefined}>
          <legend className="label">Roles</legend>
          <div className="mt-1 flex flex-wrap gap-x-6 gap-y-2">
            {getCollectionProps(fields.roles, { type: "checkbox", options: ROLE_ORDER }).map((props) => (
              <label key={props.key} className="inline-flex items-center gap-2">
                <input {...props} key={undefined} />
                <span>
                  {ROLE_WORDS[props.value as Role].label}{" "}
                  <span className="text-sm text-muted">({ROLE_WORDS[props.value as Role].hint})</span>
                </span>
              </label>
            ))}
          </div>
          <div className="mt-1">
            <FieldErrors id={fields.roles.errorId} errors={fields.roles.errors} />
          </div>
        </fieldset>
        <div className="sm:col-span-2">
          <button type="submit" className="btn" disabled={busy}>
            {busy ? "Inviting…" : "Invite"}
          </button>
        </div>
      </Form>
    </section>
  );
}

export function ErrorBoundary({ error }: Route.ErrorBoundaryProps) {
  return <ErrorView error={error} />;
}

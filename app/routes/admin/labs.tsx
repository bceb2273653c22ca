import { data, Form, useNavigation } from "react-router";
import { z } from "zod";
import type { Route } from "./+types/labs";
import { clientAddress, requireRole } from "#app/auth/session.server.ts";
import { ErrorView } from "#app/components/error-view.tsx";
import { getDb } from "#app/db/client.server.ts";
import {
  confirmLab,
  LabChangeRefused,
  listConfirmedLabs,
  listUnconfirmedLabs,
  mergeLab,
} from "#app/models/submission/labs.server.ts";
import { redirectWithFlash } from "#app/utils/flash.server.ts";
import { formatCount } from "#app/utils/age-format.ts";
import { formatTimestamp } from "#app/utils/time-format.ts";

export const meta: Route.MetaFunction = () => [{ title: "Labs to confirm — Thawline" }];

const ConfirmSchema = z.object({
  labId: z.coerce.number().int().positive(),
  name: z.string().trim().min(1).max(200),
  codePrefix: z.string().trim().min(1).max(40),
});
const MergeSchema = z.object({ labId: z.coerce.number().int().positive(), intoId: z.coerce.number().int().positive() });

export async function loader({ request }: Route.LoaderArgs) {
  // Editors only.
  await requireRole(request, "editor");
  const db = getDb();
  return {
    labs: listUnconfirmedLabs(db).map((l) => ({ ...l, createdAt: formatTimestamp(l.createdAt) })),
    targets: listConfirmedLabs(db),
  };
}

export async function action({ request }: Route.ActionArgs) {
  // Editors only.
  const me = await requireRole(request, "editor");
  const db = getDb();
  const actor = { actorId: me.id, ip: clientAddress(request) };
  const form = Object.fromEntries(await request.formData());
  try {
    switch (form.intent) {
      case "confirm": {
        const parsed = ConfirmSchema.safeParse(form);
        if (!parsed.success)
          return data({ labId: Number(form.labId), message: "Give the lab's name and its code prefix." }, { status: 400 });
        const lab = confirmLab(db, parsed.data.labId, parsed.data, actor);
        return redirectWithFlash("/labs", { kind: "success", message: `${lab.name} (prefix ${lab.codePrefix}) is confirmed.` });
      }
      case "merge": {
        const parsed = MergeSchema.safeParse(form);
        if (!parsed.success)
          return data({ labId: Number(form.labId), message: "Choose the lab to merge into." }, { status: 400 });
        const { into, moved } = mergeLab(db, parsed.data.labId, parsed.data.intoId, actor);
        return redirectWithFlash("/labs", {
          kind: "success",
          message: `Merged into ${into.name}: ${formatCount(moved)} determination${moved === 1 ? "" : "s"} moved.`,
        });
      }
      default:
        return data({ labId: null, message: "Unknown action." }, { status: 400 });
    }
  } catch (e) {
    if (e instanceof LabChangeRefused) return data({ labId: Number(form.labId), message: e.message }, { status: e.status });
    throw e;
  }
}

export default function Labs({ loaderData, actionData }: Route.ComponentProps) {
  const { labs, targets } = loaderData;
  const busy = useNavigation().state === "submitting";
  return (
    <div className="grid gap-8">
      <header>
        <h1>Labs to confirm</h1>
        <p className="mt-2 max-w-3xl text-muted">
          Uploads register a laboratory the registry does not know — from a new lab name, or from the prefix of its lab codes — as
          unconfirmed. Confirm each one (correcting its name and prefix if need be), or merge it into the laboratory it really is:
          its determinations move there.
        </p>
      </header>
      {labs.length === 0 ? (
        <p className="rounded border border-dashed border-rule px-4 py-6 text-center text-muted" data-testid="labs-empty">
          No lab is waiting for confirmation.
        </p>
      ) : (
        <ul className="grid gap-6" data-testid="unconfirmed-labs">
          {labs.map((lab) => (
            <li key={lab.id} className="card grid gap-4" aria-labelledby={`lab-${lab.id}`}>
              <div>
                <h2 id={`lab-${lab.id}`} className="text-xl">
                  {lab.name} <span className="text-base font-normal text-muted">prefix {lab.codePrefix}</span>
                </h2>
                <p className="text-sm text-muted">
                  Registered {lab.createdAt}
                  {lab.registeredBy ? ` from an upload by ${lab.registeredBy}` : ""} · {formatCount(lab.determinations)}{" "}
                  determination{lab.determinations === 1 ? "" : "s"}
                  {lab.exampleCodes.length ? ` (${lab.exampleCodes.join(", ")}${lab.determinations > 3 ? ", …" : ""})` : ""}
                </p>
                {actionData?.labId === lab.id ? (
                  <p role="alert" className="mt-2 text-sm font-semibold">
                    {actionData.message}
                  </p>
                ) : null}
              </div>
              <div className="grid gap-6 md:grid-cols-2">
                <Form method="post" className="grid gap-3">
                  <input type="hidden" name="intent" value="confirm" />
                  <input type="hidden" name="labId" value={lab.id} />
                  <div className="field">
                    <label htmlFor={`name-${lab.id}`}>Name</label>
                    <input id={`name-${lab.id}`} name="name" className="input" defaultValue={lab.name} required maxLength={200} />
                  </div>
                  <div className="field">
                    <label htmlFor={`prefix-${lab.id}`}>Lab-code prefix</label>
                    <input
                      id={`prefix-${lab.id}`}
                      name="codePrefix"
                      className="input"
                      defaultValue={lab.codePrefix}
                      required
                      maxLength={40}
                    />
                  </div>
                  <button type="submit" className="btn justify-self-start" disabled={busy}>
                    Confirm this lab
                  </button>
                </Form>
                <Form method="post" className="grid content-start gap-3">
                  <input type="hidden" name="intent" value="merge" />
                  <input type="hidden" name="labId" value={lab.id} />
                  <div className="field">
                    <label htmlFor={`into-${lab.id}`}>Or merge into</label>
                    <select id={`into-${lab.id}`} name="intoId" className="input" required defaultValue="">
                      <option value="" disabled>
                        Choose a laboratory…
                      </option>
                      {targets.map((t) => (
                        <option key={t.id} value={t.id}>
                          {t.name} ({t.codePrefix})
                        </option>
                      ))}
                    </select>
                  </div>
                  <button type="submit" className="btn-quiet justify-self-start" disabled={busy || targets.length === 0}>
                    Merge
                  </button>
                </Form>
              </div>
            </li>
          ))}
        </ul>
      )}
    </div>
  );
}

export function ErrorBoundary({ error }: Route.ErrorBoundaryProps) {
  return <ErrorView error={error} />;
}

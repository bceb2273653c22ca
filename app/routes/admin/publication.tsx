import { type SubmissionResult, getFormProps, getInputProps, useForm } from "@conform-to/react";
import { parseWithZod } from "@conform-to/zod/v4";
import { data, Form, Link, useNavigation } from "react-router";
import { z } from "zod";
import type { Route } from "./+types/publication";
import { clientAddress, requireRole } from "#app/auth/session.server.ts";
import { ErrorView } from "#app/components/error-view.tsx";
import { FieldErrors } from "#app/components/ui/field-errors.tsx";
import { getDb } from "#app/db/client.server.ts";
import { correctPublication, doiTakenBy, getPublication } from "#app/models/submission/publications.server.ts";
import { formatCitation } from "#app/utils/citation.ts";
import { redirectWithFlash } from "#app/utils/flash.server.ts";
import { invisibleCharactersProblem, normaliseIdentifier } from "#app/utils/identifiers.ts";
import { formatCount } from "#app/utils/age-format.ts";

export const meta: Route.MetaFunction = () => [{ title: "Correct a citation — Thawline" }];

const THIS_YEAR = new Date().getFullYear();
/** A DOI as registries write it: "10.", a registrant code of digits, "/", a suffix (Crossref's advice; common practice). */
const DOI_SHAPE = /^10\.\d{4,9}\/\S+$/;

const text = (max: number, words: string) =>
  z
    .string({ error: `Give the ${words}.` })
    .trim()
    .min(1, `Give the ${words}.`)
    .max(max, `Keep the ${words} under ${max.toLocaleString("en")} characters.`);

function correctionSchema(isTaken?: (doi: string) => string | null) {
  return z.object({
    authors: text(1000, "authors, as the paper lists them"),
    year: z.coerce
      .number({ error: "Give the year the paper appeared, e.g. 2021." })
      .int("Give the year as a whole number, e.g. 2021.")
      .min(1700, "Give a year from 1700 on.")
      .max(THIS_YEAR + 1, `Give a year up to ${THIS_YEAR + 1}.`),
    title: text(500, "title"),
    journal: z.string().trim().max(300, "Keep the journal under 300 characters.").optional(),
    doi: z
      .string()
      .trim()
      .max(200, "Keep the DOI under 200 characters.")
      .optional()
      .transform((v) => (v ? normaliseIdentifier(v.replace(/^(https?:\/\/(dx\.)?doi\.org\/|doi:\s*)/i, "")) : undefined))
      // On the field itself, so that its problems are named with the other fields' (not only once they pass).
      .superRefine((doi, ctx) => {
        if (!doi) return;
        const hidden = invisibleCharactersProblem(doi);
        if (hidden) return void ctx.addIssue({ code: "custom", message: `The DOI ${hidden}.` });
        if (!DOI_SHAPE.test(doi)) {
          return void ctx.addIssue({
            code: "custom",
            message: "A DOI starts with 10., then digits, a slash and the rest, e.g. 10.99999/example.1 (or leave it empty).",
          });
        }
        const owner = isTaken?.(doi);
        if (owner) ctx.addIssue({ code: "custom", message: `Another publication already has this DOI: ${owner}` });
      }),
  });
}

function publicationOr404(id: string) {
  const publication = Number.isInteger(Number(id)) ? getPublication(getDb(), Number(id)) : undefined;
  if (!publication) throw new Response("No such publication.", { status: 404, statusText: "Not Found" });
  return publication;
}

export async function loader({ request, params }: Route.LoaderArgs) {
  // Editors only.
  await requireRole(request, "editor");
  return { publication: publicationOr404(params.id) };
}

export async function action({ request, params }: Route.ActionArgs) {
  // Editors only.
  const me = await requireRole(request, "editor");
  const publication = publicationOr404(params.id);
  const db = getDb();
  const submission = parseWithZod(await request.formData(), {
    schema: correctionSchema((doi) => doiTakenBy(db, doi, publication.id)?.citation ?? null),
  });
  if (submission.status !== "success") return data({ result: submission.reply() }, { status: 400 });
  const v = submission.value;
  const changed = correctPublication(
    db,
    publication.id,
    { authors: v.authors, year: v.year, title: v.title, journal: v.journal || null, doi: v.doi ?? null },
    { actorId: me.id, ip: clientAddress(request) },
  );
  return redirectWithFlash("/publications", {
    kind: changed ? "success" : "info",
    message: changed ? `Corrected: ${changed.after}` : "Nothing was changed.",
  });
}

type LastResult = SubmissionResult<string[]> | null | undefined;

export default function CorrectPublication({ loaderData, actionData }: Route.ComponentProps) {
  const { publication } = loaderData;
  const navigation = useNavigation();
  const lastResult: LastResult = actionData?.result;
  const [form, fields] = useForm<
    z.input<ReturnType<typeof correctionSchema>>,
    z.output<ReturnType<typeof correctionSchema>>,
    string[]
  >({
    id: `publication-${publication.id}`,
    lastResult,
    defaultValue: {
      authors: publication.authors ?? "",
      year: publication.year == null ? "" : String(publication.year),
      title: publication.title ?? "",
      journal: publication.journal ?? "",
      doi: publication.doi ?? "",
    },
    shouldValidate: "onBlur",
    shouldRevalidate: "onInput",
    onValidate: ({ formData }) => parseWithZod(formData, { schema: correctionSchema() }),
  });
  const preview = formatCitation({
    authors: fields.authors.value ?? null,
    year: Number(fields.year.value) || null,
    title: fields.title.value ?? null,
    journal: fields.journal.value ?? null,
    doi: fields.doi.value ?? null,
  });
  return (
    <div className="grid max-w-3xl gap-8">
      <header>
        <p className="text-sm">
          <Link to="/publications">← Publications</Link>
        </p>
        <h1 className="mt-2">Correct a citation</h1>
        <p className="mt-2 text-muted">
          Cited by {formatCount(publication.cited)} determination{publication.cited === 1 ? "" : "s"}. Now cited as:
        </p>
        <blockquote className="mt-2 border-l-4 border-rule pl-4" data-testid="citation-now">
          {publication.citation}
        </blockquote>
      </header>
      <Form method="post" {...getFormProps(form)} className="card grid gap-4">
        <div className="field">
          <label htmlFor={fields.authors.id}>Authors</label>
          <input {...getInputProps(fields.authors, { type: "text" })} className="input" autoComplete="off" />
          <p className="text-sm text-muted">As the paper lists them, e.g. Frostvik, A., Kettle, B.</p>
          <FieldErrors id={fields.authors.errorId} errors={fields.authors.errors} />
        </div>
        <div className="grid gap-4 sm:grid-cols-[10rem_1fr]">
          <div className="field">
            <label htmlFor={fields.year.id}>Year</label>
            <input {...getInputProps(fields.year, { type: "text" })} className="input" inputMode="numeric" autoComplete="off" />
            <FieldErrors id={fields.year.errorId} errors={fields.year.errors} />
          </div>
          <div className="field">
            <label htmlFor={fields.doi.id}>DOI (optional)</label>
            <input {...getInputProps(fields.doi, { type: "text" })} className="input" autoComplete="off" spellCheck={false} />
            <FieldErrors id={fields.doi.errorId} errors={fields.doi.errors} />
          </div>
        </div>
        <div className="field">
          <label htmlFor={fields.title.id}>Title</label>
          <input {...getInputProps(fields.title, { type: "text" })} className="input" autoComplete="off" />
          <FieldErrors id={fields.title.errorId} errors={fields.title.errors} />
        </div>
        <div className="field">
          <label htmlFor={fields.journal.id}>Journal (optional)</label>
          <input {...getInputProps(fields.journal, { type: "text" })} className="input" autoComplete="off" />
          <p className="text-sm text-muted">Journal, book or report series, with volume and pages when given.</p>
          <FieldErrors id={fields.journal.errorId} errors={fields.journal.errors} />
        </div>
        <div>
          <p className="text-sm text-muted">Will be cited as:</p>
          <p className="mt-1" data-testid="citation-preview" aria-live="polite">
            {preview}
          </p>
        </div>
        <div className="flex items-center gap-4">
          <button type="submit" className="btn" disabled={navigation.state === "submitting"}>
            Save the correction
          </button>
          <Link to="/publications" className="text-sm">
            Cancel
          </Link>
        </div>
      </Form>
    </div>
  );
}

export function ErrorBoundary({ error }: Route.ErrorBoundaryProps) {
  return <ErrorView error={error} />;
}

import { getTextareaProps } from "@conform-to/react";
import { FieldError, TextField, type Fields } from "./fields.tsx";

/** Where the date was published — its DOI and its citation — and free notes. */
export function ProvenanceSection({ f }: { f: Fields }) {
  return (
    <fieldset className="card grid gap-4">
      <legend className="px-1 text-lg font-semibold">Publication and notes</legend>
      <TextField field={f.doi!} column="doi" placeholder="10.99999/example.1" />
      <fieldset className="grid gap-4 sm:grid-cols-[2fr_1fr]" aria-describedby="citation-help">
        <legend className="font-semibold">Citation</legend>
        <p id="citation-help" className="text-sm text-muted sm:col-span-2">
          Needed once for a publication the registry does not know yet — a new DOI, or a paper without one. For a DOI already in
          the registry it can stay empty.
        </p>
        <TextField field={f.pub_authors!} column="pub_authors" placeholder="Frostvik, A., Kettle, B." />
        <TextField field={f.pub_year!} column="pub_year" inputMode="numeric" placeholder="2019" />
        <TextField field={f.pub_title!} column="pub_title" className="sm:col-span-2" />
        <TextField field={f.pub_journal!} column="pub_journal" className="sm:col-span-2" />
      </fieldset>
      <div className="field">
        <label htmlFor={f.notes!.id}>Notes</label>
        <textarea {...getTextareaProps(f.notes!)} rows={3} className="input" />
        <FieldError field={f.notes!} />
      </div>
    </fieldset>
  );
}

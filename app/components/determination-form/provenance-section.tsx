import { getTextareaProps } from "@conform-to/react";
import { FieldError, TextField, type Fields } from "./fields.tsx";

/** Where the date was published, and free notes. */
export function ProvenanceSection({ f }: { f: Fields }) {
  return (
    <fieldset className="card grid gap-4">
      <legend className="px-1 text-lg font-semibold">Publication and notes</legend>
      <TextField field={f.doi!} column="doi" placeholder="10.99999/example.1" />
      <div className="field">
        <label htmlFor={f.notes!.id}>Notes</label>
        <textarea {...getTextareaProps(f.notes!)} rows={3} className="input" />
        <FieldError field={f.notes!} />
      </div>
    </fieldset>
  );
}

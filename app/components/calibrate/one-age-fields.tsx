import { FieldProblem } from "#app/components/calibrate/curve-fields.tsx";
import type { OneAgeField } from "#app/utils/calibrate-sheet.ts";

/** The one age and its 1σ error, each with its own message. */
export function OneAgeFields({
  age,
  error,
  problems,
  onChange,
}: {
  age: string;
  error: string;
  problems: { field: OneAgeField; message: string }[];
  onChange: (patch: { age?: string; error?: string }) => void;
}) {
  const problem = (field: OneAgeField) => problems.find((p) => p.field === field)?.message;
  const fields = [
    { id: "age", label: "¹⁴C age (¹⁴C yr BP)", value: age, placeholder: "10250", set: (v: string) => onChange({ age: v }) },
    { id: "error", label: "Error, 1σ (¹⁴C yr)", value: error, placeholder: "45", set: (v: string) => onChange({ error: v }) },
  ] as const;
  return (
    <div className="grid gap-4 sm:grid-cols-[repeat(2,minmax(11rem,16rem))]">
      {fields.map((f) => (
        <div key={f.id} className="field">
          <label htmlFor={f.id}>{f.label}</label>
          <input
            id={f.id}
            name={f.id}
            className="input text-lg tabular-nums"
            inputMode="decimal"
            autoComplete="off"
            placeholder={f.placeholder}
            value={f.value}
            aria-invalid={problem(f.id) ? true : undefined}
            aria-describedby={problem(f.id) ? `${f.id}-problem` : undefined}
            onChange={(e) => f.set(e.target.value)}
          />
          <FieldProblem id={`${f.id}-problem`} message={problem(f.id)} />
        </div>
      ))}
    </div>
  );
}

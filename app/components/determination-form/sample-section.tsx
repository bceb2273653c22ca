import { getSelectProps, getTextareaProps } from "@conform-to/react";
import { columnSpec } from "#app/utils/determination-input/columns.ts";
import { FieldError, TextField, type Fields } from "./fields.tsx";
import type { MeasurementChoices } from "./use-measurement-choices.ts";

/** The sample: its code, material (those the chosen method takes), depth, stratigraphy and context. */
export function SampleSection({ f, choices }: { f: Fields; choices: MeasurementChoices }) {
  return (
    <fieldset className="card grid gap-4 sm:grid-cols-2">
      <legend className="px-1 text-lg font-semibold">Sample</legend>
      <TextField field={f.sample_code!} column="sample_code" />
      <div className="field">
        <label htmlFor={f.material!.id}>Material</label>
        <select
          {...getSelectProps(f.material!)}
          defaultValue={undefined}
          value={choices.material}
          onChange={(e) => choices.chooseMaterial(e.currentTarget.value)}
          className="input"
        >
          <option value="">— choose —</option>
          {choices.materialsForMethod.map((m) => (
            <option key={m.name} value={m.name}>
              {m.name}
              {m.marine ? " (marine)" : ""}
            </option>
          ))}
        </select>
        <FieldError field={f.material!} />
      </div>
      <TextField field={f.depth_cm!} column="depth_cm" inputMode="decimal" />
      <TextField field={f.strat_unit!} column="strat_unit" />
      <TextField field={f.strat_order!} column="strat_order" inputMode="numeric" />
      <div className="field sm:col-span-2">
        <label htmlFor={f.context!.id}>Context</label>
        <textarea {...getTextareaProps(f.context!, { ariaDescribedBy: `${f.context!.id}-help` })} rows={2} className="input" />
        <p id={`${f.context!.id}-help`} className="text-sm text-muted">
          {columnSpec("context")?.help}
        </p>
        <FieldError field={f.context!} />
      </div>
    </fieldset>
  );
}

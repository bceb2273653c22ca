import { getSelectProps } from "@conform-to/react";
import type { FormOptions } from "#app/utils/submission-form.ts";
import { FieldError, Radio, TextField, type Fields } from "./fields.tsx";
import type { MeasurementChoices } from "./use-measurement-choices.ts";

const CONSTRAINT_KINDS = [
  ["minimum", "Minimum-limiting", "the site was free of ice by this time"],
  ["maximum", "Maximum-limiting", "ice reached the site after this time"],
  ["direct", "Direct", "dates the deglaciation itself"],
] as const;

/** What was measured and by whom: method, the kind of constraint the date gives, laboratory and lab code. */
export function MeasurementSection({
  f,
  choices,
  labs,
  defaultKind,
}: {
  f: Fields;
  choices: MeasurementChoices;
  labs: FormOptions["labs"];
  defaultKind: string | undefined;
}) {
  return (
    <fieldset className="card grid gap-4 sm:grid-cols-2">
      <legend className="px-1 text-lg font-semibold">Measurement</legend>
      <div className="field sm:col-span-2">
        <span className="label" id="method-label">
          Method
        </span>
        <div role="radiogroup" aria-labelledby="method-label" className="flex flex-wrap gap-x-6 gap-y-2">
          <Radio
            name="method"
            value="radiocarbon"
            checked={choices.method === "radiocarbon"}
            onChange={choices.chooseMethod}
            field={f.method}
          >
            Radiocarbon
          </Radio>
          <Radio
            name="method"
            value="luminescence"
            checked={choices.method === "luminescence"}
            onChange={choices.chooseMethod}
            field={f.method}
          >
            Luminescence
          </Radio>
        </div>
        <FieldError field={f.method!} />
      </div>
      <div className="field sm:col-span-2">
        <span className="label" id="kind-label">
          Constraint kind
        </span>
        <div role="radiogroup" aria-labelledby="kind-label" className="grid gap-1">
          {CONSTRAINT_KINDS.map(([value, label, note]) => (
            <label key={value} className="flex items-baseline gap-2 font-normal text-ink">
              <input
                type="radio"
                name="constraint_kind"
                value={value}
                defaultChecked={defaultKind === value}
                aria-invalid={f.constraint_kind!.errors ? true : undefined}
                aria-describedby={f.constraint_kind!.errors ? f.constraint_kind!.errorId : undefined}
              />
              <span>
                {label} <span className="text-muted">— {note}</span>
              </span>
            </label>
          ))}
        </div>
        <FieldError field={f.constraint_kind!} />
      </div>
      <div className="field">
        <label htmlFor={f.lab_name!.id}>Laboratory</label>
        <select {...getSelectProps(f.lab_name!)} className="input">
          <option value="">— choose —</option>
          {labs.map((l) => (
            <option key={l.id} value={l.name}>
              {l.name} ({l.codePrefix})
            </option>
          ))}
        </select>
        <FieldError field={f.lab_name!} />
      </div>
      <TextField field={f.lab_code!} column="lab_code" autoComplete="off" />
    </fieldset>
  );
}

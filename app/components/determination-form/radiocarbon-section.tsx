import { getInputProps, getSelectProps } from "@conform-to/react";
import type { FormOptions } from "#app/utils/submission-form.ts";
import { FieldWarning } from "./field-warnings.tsx";
import { FieldError, Radio, TextField, type Fields } from "./fields.tsx";
import type { MeasurementChoices } from "./use-measurement-choices.ts";

/** The radiocarbon result (conventional age or F14C), δ13C, pretreatment, curve and, for marine samples, ΔR. */
export function RadiocarbonSection({
  f,
  choices,
  curves,
}: {
  f: Fields;
  choices: MeasurementChoices;
  curves: FormOptions["curves"];
}) {
  const { method, c14Input, setC14Input, curve, setCurve } = choices;
  return (
    <fieldset
      disabled={method !== "radiocarbon"}
      hidden={method !== "radiocarbon"}
      className="card grid gap-4 sm:grid-cols-2"
      data-testid="radiocarbon-fields"
    >
      <legend className="px-1 text-lg font-semibold">Radiocarbon</legend>
      <div
        role="radiogroup"
        aria-label="How the lab reported the result"
        className="flex flex-wrap gap-x-6 gap-y-2 sm:col-span-2"
      >
        <Radio name="c14_input" value="age" checked={c14Input === "age"} onChange={setC14Input}>
          Conventional age (¹⁴C yr BP)
        </Radio>
        <Radio name="c14_input" value="f14c" checked={c14Input === "f14c"} onChange={setC14Input}>
          F¹⁴C
        </Radio>
      </div>
      <fieldset disabled={c14Input !== "age"} hidden={c14Input !== "age"} className="contents">
        <TextField field={f.c14_age!} column="c14_age" inputMode="decimal" />
        <TextField field={f.c14_error!} column="c14_error" inputMode="decimal" label="± 1σ" />
      </fieldset>
      <fieldset disabled={c14Input !== "f14c"} hidden={c14Input !== "f14c"} className="contents">
        <TextField field={f.f14c!} column="f14c" inputMode="decimal" />
        <TextField field={f.f14c_error!} column="f14c_error" inputMode="decimal" label="± 1σ" />
      </fieldset>
      <TextField field={f.d13c!} column="d13c" inputMode="decimal" />
      <div className="field">
        <label htmlFor={f.age_normalised!.id}>Already δ¹³C-normalised?</label>
        <select {...getSelectProps(f.age_normalised!, { ariaDescribedBy: `${f.age_normalised!.id}-help` })} className="input">
          <option value="yes">yes — a conventional age</option>
          <option value="no">no — normalise it with the δ¹³C given</option>
        </select>
        <p id={`${f.age_normalised!.id}-help`} className="text-sm text-muted">
          An age is never normalised twice.
        </p>
        <FieldError field={f.age_normalised!} />
      </div>
      <div className="field sm:col-span-2">
        <label className="flex items-baseline gap-2 font-normal text-ink">
          <input {...getInputProps(f.greater_than!, { type: "checkbox", value: "yes" })} />
          <span>
            Reported as “greater than” <span className="text-muted">— stored as a limit, not calibrated</span>
          </span>
        </label>
        <FieldError field={f.greater_than!} />
      </div>
      <div className="field sm:col-span-2">
        <label className="flex items-baseline gap-2 font-normal text-ink">
          <input {...getInputProps(f.normalised_to_zero_permil!, { type: "checkbox", value: "yes" })} />
          <span>
            Normalised to δ¹³C = 0 ‰ <span className="text-muted">— an older shell age; brought to −25 ‰ before calibration</span>
          </span>
        </label>
        <FieldError field={f.normalised_to_zero_permil!} />
      </div>
      <TextField field={f.pretreatment!} column="pretreatment" />
      <div className="field">
        <label htmlFor={f.curve!.id}>Calibration curve</label>
        <select
          {...getSelectProps(f.curve!)}
          defaultValue={undefined}
          value={curve}
          onChange={(e) => setCurve(e.currentTarget.value)}
          className="input"
        >
          <option value="">default (IntCal20 for terrestrial material)</option>
          {curves.map((c) => (
            <option key={c.name} value={c.name}>
              {c.displayName} ({c.kind})
            </option>
          ))}
        </select>
        <FieldError field={f.curve!} />
        <FieldWarning column="curve" />
      </div>
      <MarineReservoirFields f={f} choices={choices} />
      <FreshwaterFields f={f} choices={choices} />
    </fieldset>
  );
}

/** ΔR, shown only for marine material or a marine curve. */
function MarineReservoirFields({ f, choices }: { f: Fields; choices: MeasurementChoices }) {
  const { isMarine, marineCurves } = choices;
  return (
    <fieldset
      disabled={!isMarine}
      hidden={!isMarine}
      className="grid gap-4 sm:col-span-2 sm:grid-cols-3"
      data-testid="delta-r-fields"
    >
      <legend className="text-sm font-semibold text-muted">Local marine reservoir offset</legend>
      <TextField field={f.delta_r!} column="delta_r" inputMode="decimal" />
      <TextField field={f.delta_r_error!} column="delta_r_error" inputMode="decimal" label="ΔR ± 1σ" />
      <div className="field">
        <label htmlFor={f.delta_r_curve!.id}>ΔR derived against</label>
        <select {...getSelectProps(f.delta_r_curve!)} className="input">
          <option value="">— not stated —</option>
          {marineCurves.map((c) => (
            <option key={c.name} value={c.name}>
              {c.displayName}
            </option>
          ))}
        </select>
        <FieldError field={f.delta_r_curve!} />
        <FieldWarning column="delta_r_curve" />
      </div>
      <p className="text-sm text-muted sm:col-span-3">
        Marine ages depend on ΔR, and Marine20 is not meant for polar waters without great care. Without ΔR the age is calibrated
        with ΔR 0 ± 0, which is rarely right.
      </p>
    </fieldset>
  );
}

/** The freshwater (hard-water) offset of lake and river material, on an atmospheric curve. */
function FreshwaterFields({ f, choices }: { f: Fields; choices: MeasurementChoices }) {
  const atmospheric = !choices.isMarine;
  return (
    <fieldset
      disabled={!atmospheric}
      hidden={!atmospheric}
      className="grid gap-4 sm:col-span-2 sm:grid-cols-2"
      data-testid="freshwater-fields"
    >
      <legend className="text-sm font-semibold text-muted">Freshwater (hard-water) offset — lake and river material</legend>
      <TextField field={f.freshwater_offset!} column="freshwater_offset" inputMode="decimal" />
      <TextField
        field={f.freshwater_offset_error!}
        column="freshwater_offset_error"
        inputMode="decimal"
        label="Freshwater offset ± 1σ"
      />
    </fieldset>
  );
}

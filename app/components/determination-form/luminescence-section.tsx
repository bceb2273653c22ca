import { getSelectProps } from "@conform-to/react";
import { columnSpec, ROW_SIGNALS } from "#app/utils/determination-input/columns.ts";
import { FieldWarning } from "./field-warnings.tsx";
import { FieldError, TextField, type Fields } from "./fields.tsx";

/** The luminescence result: signal, mineral, equivalent dose, dose rate and its components, aliquots and age model. */
export function LuminescenceSection({ f, method }: { f: Fields; method: string }) {
  return (
    <fieldset
      disabled={method !== "luminescence"}
      hidden={method !== "luminescence"}
      className="card grid gap-4 sm:grid-cols-2"
      data-testid="luminescence-fields"
    >
      <legend className="px-1 text-lg font-semibold">Luminescence</legend>
      <div className="field">
        <label htmlFor={f.signal!.id}>Signal</label>
        <select {...getSelectProps(f.signal!)} className="input">
          <option value="">— choose —</option>
          {ROW_SIGNALS.map((s) => (
            <option key={s} value={s}>
              {s === "pIRIR" ? "post-IR IRSL (pIRIR)" : s}
            </option>
          ))}
        </select>
        <FieldError field={f.signal!} />
        <FieldWarning column="signal" />
      </div>
      <TextField field={f.mineral!} column="mineral" />
      <TextField field={f.de_gy!} column="de_gy" inputMode="decimal" />
      <TextField field={f.de_error_gy!} column="de_error_gy" inputMode="decimal" label="De ± 1σ" />
      <TextField field={f.dose_rate_gy_per_ka!} column="dose_rate_gy_per_ka" inputMode="decimal" />
      <TextField
        field={f.dose_rate_error_gy_per_ka!}
        column="dose_rate_error_gy_per_ka"
        inputMode="decimal"
        label="Dose rate ± 1σ"
      />
      <DoseRateComponents f={f} />
      <TextField field={f.measurement_year!} column="measurement_year" inputMode="numeric" />
      <TextField field={f.aliquots!} column="aliquots" inputMode="numeric" label="Aliquots or grains" />
      <TextField field={f.age_model!} column="age_model" />
    </fieldset>
  );
}

/** A measured input and its 1σ side by side; the error's help states the default assumed without it. */
function WithError({ f, value, error, errorLabel }: { f: Fields; value: string; error: string; errorLabel: string }) {
  return (
    <>
      <TextField field={f[value]!} column={value} inputMode="decimal" />
      <TextField field={f[error]!} column={error} inputMode="decimal" label={errorLabel} />
    </>
  );
}

/**
 * What the registry computes the dose rate from when it is left empty, each input with the lab's
 * error. Kept with the date either way, so a reader can see where a dose rate comes from.
 */
function DoseRateComponents({ f }: { f: Fields }) {
  return (
    <fieldset className="grid gap-4 sm:col-span-2 sm:grid-cols-2" data-testid="dose-rate-inputs">
      <legend className="text-sm font-semibold text-muted">
        Dose-rate inputs — kept with the date, and used to compute the dose rate (with every term and error) when it is left
        empty. An error left empty is assumed at the default its note states, and the determination says so.
      </legend>
      <h3 className="text-base font-semibold sm:col-span-2">Concentrations and water</h3>
      <WithError f={f} value="k_percent" error="k_error_percent" errorLabel="K ± 1σ" />
      <WithError f={f} value="u_ppm" error="u_error_ppm" errorLabel="U ± 1σ" />
      <WithError f={f} value="th_ppm" error="th_error_ppm" errorLabel="Th ± 1σ" />
      <WithError f={f} value="rb_ppm" error="rb_error_ppm" errorLabel="Rb ± 1σ" />
      <WithError f={f} value="water_content" error="water_content_error" errorLabel="Water content ± 1σ" />
      <h3 className="text-base font-semibold sm:col-span-2">Grains</h3>
      <TextField field={f.grain_size_um!} column="grain_size_um" inputMode="decimal" />
      <GrainUse f={f} />
      <TextField field={f.etch_depth_um!} column="etch_depth_um" inputMode="decimal" />
      <div aria-hidden="true" className="hidden sm:block" />
      <WithError f={f} value="a_value" error="a_value_error" errorLabel="a-value ± 1σ" />
      <WithError f={f} value="internal_k_percent" error="internal_k_error_percent" errorLabel="Internal K ± 1σ" />
      <WithError f={f} value="internal_rb_ppm" error="internal_rb_error_ppm" errorLabel="Internal Rb ± 1σ" />
      <h3 className="text-base font-semibold sm:col-span-2">Burial and cosmic dose rate</h3>
      <WithError f={f} value="burial_depth_m" error="burial_depth_error_m" errorLabel="Burial depth ± 1σ" />
      <WithError f={f} value="density_g_cm3" error="density_error_g_cm3" errorLabel="Density ± 1σ" />
      <WithError f={f} value="lab_cosmic_gy_per_ka" error="lab_cosmic_error_gy_per_ka" errorLabel="Lab cosmic dose rate ± 1σ" />
    </fieldset>
  );
}

function GrainUse({ f }: { f: Fields }) {
  const field = f.grain_use!;
  const spec = columnSpec("grain_use");
  return (
    <div className="field">
      <label htmlFor={field.id}>{spec?.label}</label>
      <select {...getSelectProps(field, { ariaDescribedBy: `${field.id}-help` })} className="input">
        <option value="">— from the grain size —</option>
        <option value="coarse">coarse grains</option>
        <option value="fine">fine grains (alpha dose too)</option>
      </select>
      <p id={`${field.id}-help`} className="text-sm text-muted">
        {spec?.help}
      </p>
      <FieldError field={field} />
      <FieldWarning column="grain_use" />
    </div>
  );
}

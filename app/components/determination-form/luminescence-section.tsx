import { getSelectProps } from "@conform-to/react";
import { ROW_SIGNALS } from "#app/utils/determination-input/columns.ts";
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

/** What the dose rate is computed from when it is left empty. */
function DoseRateComponents({ f }: { f: Fields }) {
  return (
    <fieldset className="grid gap-4 sm:col-span-2 sm:grid-cols-3">
      <legend className="text-sm font-semibold text-muted">
        Dose rate components — kept with the date, and used to compute the dose rate when it is left empty
      </legend>
      <TextField field={f.k_percent!} column="k_percent" inputMode="decimal" />
      <TextField field={f.u_ppm!} column="u_ppm" inputMode="decimal" />
      <TextField field={f.th_ppm!} column="th_ppm" inputMode="decimal" />
      <TextField field={f.water_content!} column="water_content" inputMode="decimal" />
      <TextField field={f.burial_depth_m!} column="burial_depth_m" inputMode="decimal" />
      <TextField field={f.density_g_cm3!} column="density_g_cm3" inputMode="decimal" />
      <TextField field={f.grain_size_um!} column="grain_size_um" inputMode="decimal" />
    </fieldset>
  );
}

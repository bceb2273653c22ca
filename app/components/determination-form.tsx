import {
  getFormProps,
  getInputProps,
  getSelectProps,
  getTextareaProps,
  useForm,
  type FieldMetadata,
  type SubmissionResult,
} from "@conform-to/react";
import { parseWithZod } from "@conform-to/zod/v4";
import { useEffect, useMemo, useRef, useState } from "react";
import { Form, Link, useFetcher, useNavigation } from "react-router";
import { SiteLocationPicker } from "#app/components/site-location-picker.tsx";
import { formatCal, formatCalRange, formatProbability } from "#app/utils/age-format.ts";
import { columnSpec, ROW_SIGNALS } from "#app/utils/determination-input/columns.ts";
import {
  clientRowContext,
  existingRecordLink,
  makeSubmissionSchema,
  type FormOptions,
  type PreviewResult,
  type SubmissionValue,
} from "#app/utils/submission-form.ts";
import { FieldErrors } from "#app/components/ui/field-errors.tsx";

/*
 * The single-determination form, for a new determination and for editing one. Field names are
 * the upload template's column names; the same schema validates here and on the server. The
 * calendar age previews live as the contributor types, through a resource route that computes
 * it exactly as the registry will store it.
 */

export const PREVIEW_ACTION = "/api/determination-preview";
const PREVIEW_DEBOUNCE_MS = 350;

type Field = FieldMetadata<unknown, Record<string, unknown>, string[]>;

export function DeterminationForm({
  options,
  defaultValue,
  lastResult,
  submitLabel,
  intent,
}: {
  options: FormOptions;
  defaultValue: Record<string, string>;
  lastResult: SubmissionResult<string[]> | null | undefined;
  submitLabel: string;
  /** Hidden intent for pages with several forms (the edit page). */
  intent?: string;
}) {
  const navigation = useNavigation();
  const ctx = useMemo(() => clientRowContext(options), [options]);
  const [form, fields] = useForm<Record<string, unknown>, SubmissionValue, string[]>({
    id: "determination-form",
    lastResult: navigation.state === "idle" ? lastResult : null,
    defaultValue,
    shouldValidate: "onBlur",
    shouldRevalidate: "onInput",
    onValidate: ({ formData }) => parseWithZod(formData, { schema: makeSubmissionSchema(ctx) }),
  });
  const f = fields as unknown as Record<string, Field>;

  // What the form shows depends on a few choices; they are kept here and submitted as typed.
  // After a submission without script the page is rendered afresh: start from what was sent, so
  // choosing "A new site" or another method and submitting reveals that part of the form.
  const sent = (lastResult?.initialValue ?? {}) as Record<string, unknown>;
  const start = (name: string): string | undefined =>
    typeof sent[name] === "string" ? (sent[name] as string) : defaultValue[name];
  const [siteChoice, setSiteChoice] = useState(start("site_choice") === "existing" ? "existing" : "new");
  const [siteId, setSiteId] = useState(start("site_id") ?? "");
  const [siteFilter, setSiteFilter] = useState("");
  const [method, setMethod] = useState(start("method") || "radiocarbon");
  const [material, setMaterial] = useState(start("material") ?? "");
  const [curve, setCurve] = useState(start("curve") ?? "");
  const [c14Input, setC14Input] = useState(defaultValue.c14_age === "" && defaultValue.f14c ? "f14c" : "age");

  const marineMaterials = useMemo(() => new Set(options.materials.filter((m) => m.marine).map((m) => m.name)), [options]);
  const marineCurves = useMemo(() => options.curves.filter((c) => c.kind === "marine"), [options]);
  const isMarine = marineMaterials.has(material) || marineCurves.some((c) => c.name === curve);
  const materialsForMethod = options.materials.filter((m) => m.methods.includes(method));
  const chosenSite = options.sites.find((s) => String(s.id) === siteId);
  const filteredSites = useMemo(() => {
    const q = siteFilter.trim().toLowerCase();
    const list = q ? options.sites.filter((s) => s.name.toLowerCase().includes(q)) : options.sites;
    // Keep the chosen site listed even when the filter would hide it.
    const shown = list.slice(0, 300);
    if (chosenSite && !shown.includes(chosenSite)) shown.unshift(chosenSite);
    return { shown, more: list.length - Math.min(list.length, 300) };
  }, [siteFilter, options.sites, chosenSite]);

  function chooseMethod(next: string) {
    setMethod(next);
    // A material of the other method would only be refused; let the contributor choose again.
    if (material && !options.materials.some((m) => m.name === material && m.methods.includes(next))) chooseMaterial("");
  }

  function chooseMaterial(name: string) {
    setMaterial(name);
    // Marine material is calibrated on a marine curve; pick one so the contributor need not.
    if (marineMaterials.has(name) && !marineCurves.some((c) => c.name === curve) && marineCurves[0]) {
      setCurve(marineCurves[0].name);
    } else if (!marineMaterials.has(name) && marineCurves.some((c) => c.name === curve)) {
      setCurve("");
    }
  }

  // ---- live preview
  const preview = useFetcher<PreviewResult>();
  const formRef = useRef<HTMLFormElement>(null);
  const timer = useRef<ReturnType<typeof setTimeout> | undefined>(undefined);
  const lastSent = useRef("");
  const schedulePreview = () => {
    clearTimeout(timer.current);
    timer.current = setTimeout(() => {
      if (!formRef.current) return;
      const data = new FormData(formRef.current);
      const key = new URLSearchParams(data as unknown as Record<string, string>).toString();
      if (key === lastSent.current) return;
      lastSent.current = key;
      void preview.submit(data, { method: "post", action: PREVIEW_ACTION });
    }, PREVIEW_DEBOUNCE_MS);
  };
  useEffect(() => {
    schedulePreview();
    return () => clearTimeout(timer.current);
    // Choices that enable or disable fields change what is submitted; a re-render after them re-checks.
    // eslint-disable-next-line react-hooks/exhaustive-deps
  }, [method, material, curve, c14Input]);

  return (
    <div className="grid gap-8 lg:grid-cols-[minmax(0,1fr)_20rem]">
      <Form
        method="post"
        {...getFormProps(form)}
        ref={formRef}
        onChange={schedulePreview}
        className="grid gap-8"
        data-testid="determination-form"
      >
        {intent ? <input type="hidden" name="intent" value={intent} /> : null}
        {form.errors ? (
          <p id={form.errorId} role="alert" className="rounded border border-conflict bg-conflict-bg px-4 py-2 text-conflict">
            {form.errors.join(" ")}
          </p>
        ) : null}

        {/* ---------------------------------------------------------------- site */}
        <fieldset className="card grid gap-4">
          <legend className="px-1 text-lg font-semibold">Site</legend>
          <div role="radiogroup" aria-label="Where the sample was taken" className="flex flex-wrap gap-x-6 gap-y-2">
            <Radio name="site_choice" value="existing" checked={siteChoice === "existing"} onChange={setSiteChoice}>
              A site already in the registry
            </Radio>
            <Radio name="site_choice" value="new" checked={siteChoice === "new"} onChange={setSiteChoice}>
              A new site
            </Radio>
          </div>

          {siteChoice === "existing" ? (
            <div className="grid gap-2">
              <div className="field">
                <label htmlFor="site-filter">Find a site by name</label>
                <input
                  id="site-filter"
                  type="search"
                  className="input"
                  value={siteFilter}
                  onChange={(e) => setSiteFilter(e.currentTarget.value)}
                  aria-controls={f.site_id!.id}
                  autoComplete="off"
                  placeholder="Type part of the name"
                />
              </div>
              <div className="field">
                <label htmlFor={f.site_id!.id}>Site</label>
                <select
                  {...getSelectProps(f.site_id!)}
                  defaultValue={undefined}
                  value={siteId}
                  onChange={(e) => setSiteId(e.currentTarget.value)}
                  size={Math.min(8, Math.max(3, filteredSites.shown.length + 1))}
                  className="input"
                >
                  <option value="">— choose a site —</option>
                  {filteredSites.shown.map((s) => (
                    <option key={s.id} value={s.id}>
                      {s.name} ({s.latitude.toFixed(4)}°, {s.longitude.toFixed(4)}°)
                    </option>
                  ))}
                </select>
                {filteredSites.more > 0 ? (
                  <p className="text-sm text-muted">{filteredSites.more} more; type part of the name to narrow the list.</p>
                ) : null}
                {options.sites.length === 0 ? (
                  <p className="text-sm text-muted">The registry has no sites yet; enter a new one.</p>
                ) : null}
                {chosenSite ? (
                  <p className="text-sm" data-testid="chosen-site">
                    Chosen: <strong>{chosenSite.name}</strong>, {chosenSite.latitude.toFixed(4)}°,{" "}
                    {chosenSite.longitude.toFixed(4)}°{" "}
                    <Link to={`/sites/${chosenSite.id}`} target="_blank" rel="noopener">
                      see the site
                    </Link>
                  </p>
                ) : null}
                <FieldError field={f.site_id!} />
              </div>
              {chosenSite ? (
                <>
                  <input type="hidden" name="site_name" value={chosenSite.name} />
                  <input type="hidden" name="latitude" value={String(chosenSite.latitude)} />
                  <input type="hidden" name="longitude" value={String(chosenSite.longitude)} />
                </>
              ) : null}
            </div>
          ) : null}

          <fieldset disabled={siteChoice !== "new"} hidden={siteChoice !== "new"} className="grid gap-4 sm:grid-cols-2">
            <TextField field={f.site_name!} column="site_name" className="sm:col-span-2" />
            <TextField field={f.latitude!} column="latitude" inputMode="decimal" placeholder="58.7123" />
            <TextField field={f.longitude!} column="longitude" inputMode="decimal" placeholder="-64.3511" />
            {siteChoice === "new" ? (
              <SiteLocationPicker sites={options.sites} latitudeId={f.latitude!.id} longitudeId={f.longitude!.id} />
            ) : null}
            <TextField field={f.elevation_m!} column="elevation_m" inputMode="decimal" />
            <TextField field={f.setting!} column="setting" />
            <p className="text-sm text-muted sm:col-span-2">
              A site of the same name within about 100 m of these coordinates is taken to be the same site.
            </p>
          </fieldset>
        </fieldset>

        {/* ---------------------------------------------------------------- sample */}
        <fieldset className="card grid gap-4 sm:grid-cols-2">
          <legend className="px-1 text-lg font-semibold">Sample</legend>
          <TextField field={f.sample_code!} column="sample_code" />
          <div className="field">
            <label htmlFor={f.material!.id}>Material</label>
            <select
              {...getSelectProps(f.material!)}
              defaultValue={undefined}
              value={material}
              onChange={(e) => chooseMaterial(e.currentTarget.value)}
              className="input"
            >
              <option value="">— choose —</option>
              {materialsForMethod.map((m) => (
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
            <textarea
              {...getTextareaProps(f.context!, { ariaDescribedBy: `${f.context!.id}-help` })}
              rows={2}
              className="input"
            />
            <p id={`${f.context!.id}-help`} className="text-sm text-muted">
              {columnSpec("context")?.help}
            </p>
            <FieldError field={f.context!} />
          </div>
        </fieldset>

        {/* ---------------------------------------------------------------- measurement */}
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
                checked={method === "radiocarbon"}
                onChange={chooseMethod}
                field={f.method}
              >
                Radiocarbon
              </Radio>
              <Radio
                name="method"
                value="luminescence"
                checked={method === "luminescence"}
                onChange={chooseMethod}
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
              {(
                [
                  ["minimum", "Minimum-limiting", "the site was free of ice by this time"],
                  ["maximum", "Maximum-limiting", "ice reached the site after this time"],
                  ["direct", "Direct", "dates the deglaciation itself"],
                ] as const
              ).map(([value, label, note]) => (
                <label key={value} className="flex items-baseline gap-2 font-normal text-ink">
                  <input
                    type="radio"
                    name="constraint_kind"
                    value={value}
                    defaultChecked={defaultValue.constraint_kind === value}
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
              {options.labs.map((l) => (
                <option key={l.id} value={l.name}>
                  {l.name} ({l.codePrefix})
                </option>
              ))}
            </select>
            <FieldError field={f.lab_name!} />
          </div>
          <TextField field={f.lab_code!} column="lab_code" autoComplete="off" />
        </fieldset>

        {/* ---------------------------------------------------------------- radiocarbon */}
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
              F14C
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
            <label htmlFor={f.age_normalised!.id}>Already δ13C-normalised?</label>
            <select {...getSelectProps(f.age_normalised!, { ariaDescribedBy: `${f.age_normalised!.id}-help` })} className="input">
              <option value="yes">yes — a conventional age</option>
              <option value="no">no — normalise it with the δ13C given</option>
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
              {options.curves.map((c) => (
                <option key={c.name} value={c.name}>
                  {c.displayName} ({c.kind})
                </option>
              ))}
            </select>
            <FieldError field={f.curve!} />
          </div>
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
            </div>
            <p className="text-sm text-muted sm:col-span-3">
              Marine ages depend on ΔR, and Marine20 is not meant for polar waters without great care. Without ΔR the age is
              calibrated with ΔR 0 ± 0, which is rarely right.
            </p>
          </fieldset>
        </fieldset>

        {/* ---------------------------------------------------------------- luminescence */}
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
          <TextField field={f.measurement_year!} column="measurement_year" inputMode="numeric" />
          <TextField field={f.aliquots!} column="aliquots" inputMode="numeric" label="Aliquots or grains" />
          <TextField field={f.age_model!} column="age_model" />
        </fieldset>

        {/* ---------------------------------------------------------------- provenance */}
        <fieldset className="card grid gap-4">
          <legend className="px-1 text-lg font-semibold">Publication and notes</legend>
          <TextField field={f.doi!} column="doi" placeholder="10.99999/example.1" />
          <div className="field">
            <label htmlFor={f.notes!.id}>Notes</label>
            <textarea {...getTextareaProps(f.notes!)} rows={3} className="input" />
            <FieldError field={f.notes!} />
          </div>
        </fieldset>

        <div className="flex flex-wrap items-center gap-4">
          <button type="submit" className="btn" disabled={navigation.state === "submitting"}>
            {navigation.state === "submitting" ? "Saving…" : submitLabel}
          </button>
          <p className="text-sm text-muted">Nothing is stored until the whole form is valid.</p>
        </div>
      </Form>

      <aside className="lg:sticky lg:top-6 lg:self-start">
        <PreviewPanel state={preview.data} busy={preview.state !== "idle"} />
      </aside>
    </div>
  );
}

function Radio({
  name,
  value,
  checked,
  onChange,
  children,
  field,
}: {
  name: string;
  value: string;
  checked: boolean;
  onChange: (v: string) => void;
  children: React.ReactNode;
  field?: Field;
}) {
  return (
    <label className="flex items-baseline gap-2 font-normal text-ink">
      <input
        type="radio"
        name={name}
        value={value}
        checked={checked}
        onChange={() => onChange(value)}
        aria-invalid={field?.errors ? true : undefined}
        aria-describedby={field?.errors ? field.errorId : undefined}
      />
      <span>{children}</span>
    </label>
  );
}

function TextField({
  field,
  column,
  label,
  className = "",
  inputMode,
  placeholder,
  autoComplete,
}: {
  field: Field;
  column: string;
  label?: string;
  className?: string;
  inputMode?: "decimal" | "numeric" | "text";
  placeholder?: string;
  autoComplete?: string;
}) {
  const spec = columnSpec(column);
  const helpId = `${field.id}-help`;
  const unit = spec?.unit && !spec.unit.startsWith("decimal degrees") ? spec.unit : "";
  return (
    <div className={`field ${className}`}>
      <label htmlFor={field.id}>
        {label ?? spec?.label ?? column}
        {unit ? <span className="font-normal"> ({unit})</span> : null}
      </label>
      <input
        {...getInputProps(field, { type: "text", ariaDescribedBy: spec?.help ? helpId : undefined })}
        inputMode={inputMode}
        placeholder={placeholder}
        autoComplete={autoComplete}
        className="input"
      />
      {spec?.help ? (
        <p id={helpId} className="text-sm text-muted">
          {spec.help}
        </p>
      ) : null}
      <FieldError field={field} />
    </div>
  );
}

/** The field's message; a duplicate lab code links to the record already in the registry. */
export function FieldError({ field }: { field: Field }) {
  return (
    <FieldErrors
      id={field.errorId}
      errors={field.errors}
      render={(message) => {
        const link = existingRecordLink(message);
        if (!link) return message;
        return (
          <>
            {link.before}
            <Link to={link.href} data-testid="existing-record-link">
              {link.href}
            </Link>
          </>
        );
      }}
    />
  );
}

function PreviewPanel({ state, busy }: { state: PreviewResult | undefined; busy: boolean }) {
  return (
    <section className="card" aria-labelledby="preview-heading" aria-busy={busy}>
      <h2 id="preview-heading" className="text-lg">
        Calendar age
      </h2>
      <div aria-live="polite" className="mt-3 grid gap-2" data-testid="preview">
        {!state ? (
          <p className="text-muted">The calendar age appears here as you type the measurement.</p>
        ) : state.state === "ok" ? (
          <>
            <p>
              <span className="text-sm text-muted">Median</span>
              <br />
              <span className="text-2xl font-semibold" data-testid="preview-median">
                {formatCal(state.medianCalBp)}
              </span>{" "}
              cal BP
            </p>
            <div>
              <p className="text-sm text-muted">95.4 % range{state.hpd95.length > 1 ? "s" : ""} (cal BP)</p>
              <ul data-testid="preview-hpd95">
                {state.hpd95.map((r, i) => (
                  <li key={i}>
                    {formatCalRange(r.from, r.to)} <span className="text-muted">({formatProbability(r.p)})</span>
                  </li>
                ))}
              </ul>
            </div>
            {state.luminescence ? (
              <p className="text-sm">
                {state.luminescence.ageKa.toFixed(2)} ± {state.luminescence.errorKa.toFixed(2)} ka before measurement; dose rate{" "}
                {state.luminescence.doseRate.toFixed(3)} ± {state.luminescence.doseRateError.toFixed(3)} Gy/ka
                {state.luminescence.computed ? " (computed from K, U, Th)" : ""}
              </p>
            ) : null}
            <p className="text-sm text-muted">On {state.label}. Calibrated ages depend on the curve and its version.</p>
          </>
        ) : state.state === "no-age" ? (
          <p className="rounded border border-caution px-3 py-2" data-testid="preview-message">
            {state.message}
          </p>
        ) : (
          <p className="text-muted" data-testid="preview-message">
            {state.message}
          </p>
        )}
      </div>
    </section>
  );
}

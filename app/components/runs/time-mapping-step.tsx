import { getFormProps, getInputProps, useForm, type SubmissionResult } from "@conform-to/react";
import { parseWithZod } from "@conform-to/zod/v4";
import { useState } from "react";
import { Form, useNavigation } from "react-router";
import { FieldErrors } from "#app/components/ui/field-errors.tsx";
import type { TimeMappingNeeded } from "#app/db/schema.ts";
import { previewCalBp } from "#app/models/model-runs/time-axis.ts";
import { formatYears } from "#app/utils/age-format.ts";
import { TimeOffsetSchema } from "#app/utils/time-offset.ts";

/**
 * The step between upload and scoring for a file whose time units do not say how model time maps
 * to cal BP: the modeller states the cal BP age of model time 0 and sees the run's span it gives.
 */
export function TimeMappingStep({
  mapping,
  others,
  lastResult,
}: {
  mapping: TimeMappingNeeded;
  /** Other runs of the same ensemble still waiting for a time offset. */
  others: number;
  lastResult: SubmissionResult<string[]> | null | undefined;
}) {
  const [form, fields] = useForm({
    id: "time-offset",
    lastResult,
    shouldValidate: "onBlur",
    onValidate: ({ formData }) => parseWithZod(formData, { schema: TimeOffsetSchema }),
  });
  const [typed, setTyped] = useState<number | null>(null);
  const busy = useNavigation().state !== "idle";
  const preview = typed !== null ? previewCalBp(mapping.units, mapping.first, mapping.last, typed) : null;
  return (
    <section aria-labelledby="time-mapping" className="card space-y-4 border-ice-400" data-testid="time-mapping-step">
      <h2 id="time-mapping">Step before scoring: map model time to cal BP</h2>
      <p className="max-w-3xl">
        The file&apos;s time axis runs from {mapping.first.toLocaleString("en")} to {mapping.last.toLocaleString("en")}{" "}
        {mapping.units ? <>in “{mapping.units}”</> : "with no units"} ({mapping.n.toLocaleString("en")} time slices), which does
        not say how it relates to the present. State the calendar age (cal BP, years before AD 1950) of model time 0; model time
        is taken to run forward from it. The run is kept, queued, and scored once the offset is stated.
      </p>
      <Form method="post" {...getFormProps(form)} className="flex flex-wrap items-end gap-4">
        <input type="hidden" name="intent" value="time-offset" />
        <div className="field min-w-64">
          <label htmlFor={fields.time_offset.id}>Cal BP of model time 0</label>
          <input
            {...getInputProps(fields.time_offset, { type: "number" })}
            step="any"
            className="input"
            onInput={(e) => {
              const n = Number(e.currentTarget.value);
              setTyped(e.currentTarget.value.trim() && Number.isFinite(n) ? n : null);
            }}
          />
          <FieldErrors id={fields.time_offset.errorId} errors={fields.time_offset.errors} />
        </div>
        {others > 0 ? (
          <label className="flex items-center gap-2">
            <input type="checkbox" name="whole_ensemble" value="on" defaultChecked />
            Also for the {others} other run{others === 1 ? "" : "s"} of this ensemble waiting for one
          </label>
        ) : null}
        <button type="submit" className="btn" disabled={busy}>
          {busy ? "Checking…" : "State the offset and score"}
        </button>
      </Form>
      <p className="text-sm text-muted" role="status" aria-live="polite">
        {preview
          ? `The run would span ${formatYears(preview.first)} to ${formatYears(preview.last)} cal BP.`
          : "Type an offset to see the span it gives."}
      </p>
      <FieldErrors id={form.errorId} errors={form.errors} />
    </section>
  );
}

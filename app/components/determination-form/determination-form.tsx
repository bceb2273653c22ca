import { getFormProps, useForm, type SubmissionResult } from "@conform-to/react";
import { parseWithZod } from "@conform-to/zod/v4";
import { useMemo, useRef } from "react";
import { Form, useFetcher, useNavigation } from "react-router";
import {
  clientRowContext,
  makeSubmissionSchema,
  type FormOptions,
  type PreviewResult,
  type SubmissionValue,
} from "#app/utils/submission-form.ts";
import { FieldWarningsProvider } from "./field-warnings.tsx";
import type { Fields } from "./fields.tsx";
import { LuminescenceSection } from "./luminescence-section.tsx";
import { MeasurementSection } from "./measurement-section.tsx";
import { PreviewPanel } from "./preview-panel.tsx";
import { ProvenanceSection } from "./provenance-section.tsx";
import { RadiocarbonSection } from "./radiocarbon-section.tsx";
import { SampleSection } from "./sample-section.tsx";
import { SiteSection } from "./site-section.tsx";
import { useLivePreview } from "./use-live-preview.ts";
import { useMeasurementChoices } from "./use-measurement-choices.ts";

/*
 * The single-determination form, for a new determination and for editing one. Field names are
 * the upload template's column names; the same schema validates here and on the server. The
 * calendar age previews live as the contributor types (use-live-preview.ts). Each fieldset is its
 * own component in this folder; the choices that show or hide parts live in use-measurement-choices.ts.
 */
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
  const f = fields as unknown as Fields;

  // What the form shows depends on a few choices; they are kept in state and submitted as typed.
  // After a submission without script the page is rendered afresh: start from what was sent, so
  // choosing "A new site" or another method and submitting reveals that part of the form.
  const sent = (lastResult?.initialValue ?? {}) as Record<string, unknown>;
  const start = (name: string): string | undefined =>
    typeof sent[name] === "string" ? (sent[name] as string) : defaultValue[name];
  const choices = useMeasurementChoices(options, start, defaultValue);
  const formRef = useRef<HTMLFormElement>(null);
  const preview = useFetcher<PreviewResult>();
  const schedulePreview = useLivePreview(formRef, preview, [choices.method, choices.material, choices.curve, choices.c14Input]);

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
        <FieldWarningsProvider warnings={preview.data?.warnings}>
          <SiteSection f={f} siteArea={options.siteArea} start={start} />
          <SampleSection f={f} choices={choices} />
          <MeasurementSection f={f} choices={choices} labs={options.labs} defaultKind={defaultValue.constraint_kind} />
          <RadiocarbonSection f={f} choices={choices} curves={options.curves} />
          <LuminescenceSection f={f} method={choices.method} />
          <ProvenanceSection f={f} />
        </FieldWarningsProvider>
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

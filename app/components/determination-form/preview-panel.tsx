import { formatCal, formatCalRange, formatProbability, formatWithError, UNITS } from "#app/utils/age-format.ts";
import { calendarModelWords } from "#app/utils/labels.ts";
import type { PreviewResult } from "#app/utils/submission-form.ts";

/** The live calendar age beside the form. */
export function PreviewPanel({ state, busy }: { state: PreviewResult | undefined; busy: boolean }) {
  return (
    <section className="card" aria-labelledby="preview-heading" aria-busy={busy}>
      <h2 id="preview-heading" className="text-lg">
        Calendar age
      </h2>
      <div aria-live="polite" className="mt-3 grid gap-2" data-testid="preview">
        {!state ? (
          <p className="text-muted">The calendar age appears here as you type the measurement.</p>
        ) : state.state === "ok" ? (
          <PreviewAge state={state} />
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

function PreviewAge({ state }: { state: Extract<PreviewResult, { state: "ok" }> }) {
  return (
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
        <p className="text-sm" data-testid="preview-luminescence">
          {formatWithError(state.luminescence.ageKa, state.luminescence.errorKa, UNITS.ka)} before measurement; dose rate{" "}
          {formatWithError(state.luminescence.doseRate, state.luminescence.doseRateError, UNITS.gyPerKa)}
          {state.luminescence.computed ? " (computed from the inputs with every term and error)" : " (the lab's value)"}
        </p>
      ) : null}
      <p className="text-sm text-muted">
        On {calendarModelWords(state.label)}. Calibrated ages depend on the curve and its version.
      </p>
    </>
  );
}

import { FieldErrors } from "#app/components/ui/field-errors.tsx";
import type { PageCurve } from "#app/models/calibration/calibrate-page.server.ts";
import type { OneAgeField } from "#app/utils/calibrate-sheet.ts";

type Problems = Partial<Record<OneAgeField, string>>;

/** A one-age field's message; it follows the typing, so it is not announced as an alert. */
export function FieldProblem({ id, message }: { id: string; message?: string }) {
  return <FieldErrors id={id} errors={message ? [message] : null} announce={false} />;
}

/**
 * The curve, and ΔR ± 1σ when it is a marine one (shown by CSS from the chosen option, so it works
 * without script too). In sheet mode they apply to rows that name no curve.
 */
export function CurveFields({
  curves,
  curve,
  deltaR,
  deltaRError,
  sheetMode,
  problems,
  onChange,
}: {
  curves: PageCurve[];
  curve: string;
  deltaR: string;
  deltaRError: string;
  sheetMode: boolean;
  problems: Problems;
  onChange: (patch: { curve?: string; deltaR?: string; deltaRError?: string }) => void;
}) {
  const chosen = curves.find((c) => c.name === curve);
  return (
    <div className="space-y-3">
      <div className="grid gap-4 sm:grid-cols-[minmax(14rem,1.4fr)_repeat(2,minmax(9rem,1fr))]">
        <div className="field">
          <label htmlFor="curve">{sheetMode ? "Curve for rows that name none" : "Curve"}</label>
          <select id="curve" name="curve" className="input" value={curve} onChange={(e) => onChange({ curve: e.target.value })}>
            {curves.map((c) => (
              <option key={c.name} value={c.name} className={c.kind === "marine" ? "marine-option" : undefined}>
                {c.displayName} ({c.version}){c.kind === "marine" ? " — marine" : ""}
              </option>
            ))}
          </select>
          <FieldProblem id="curve-problem" message={problems.curve} />
        </div>
        <div className="field hidden group-has-[.marine-option:checked]:flex">
          <label htmlFor="delta_r">ΔR (¹⁴C yr)</label>
          <input
            id="delta_r"
            name="delta_r"
            className="input"
            inputMode="decimal"
            autoComplete="off"
            placeholder="0"
            value={deltaR}
            aria-invalid={problems.delta_r ? true : undefined}
            aria-describedby={problems.delta_r ? "delta_r-problem" : undefined}
            onChange={(e) => onChange({ deltaR: e.target.value })}
          />
          <FieldProblem id="delta_r-problem" message={problems.delta_r} />
        </div>
        <div className="field hidden group-has-[.marine-option:checked]:flex">
          <label htmlFor="delta_r_error">ΔR error, 1σ (¹⁴C yr)</label>
          <input
            id="delta_r_error"
            name="delta_r_error"
            className="input"
            inputMode="decimal"
            autoComplete="off"
            placeholder="0"
            value={deltaRError}
            aria-invalid={problems.delta_r_error ? true : undefined}
            aria-describedby={problems.delta_r_error ? "delta_r_error-problem" : undefined}
            onChange={(e) => onChange({ deltaRError: e.target.value })}
          />
          <FieldProblem id="delta_r_error-problem" message={problems.delta_r_error} />
        </div>
      </div>
      {chosen?.kind === "marine" ? (
        <p className="rounded border border-caution bg-caution-bg px-3 py-2 text-sm text-caution">
          {chosen.displayName} is a global average for the non-polar ocean; add a local ΔR worked out against this curve. Its
          authors advise great caution for polar samples.
        </p>
      ) : null}
    </div>
  );
}

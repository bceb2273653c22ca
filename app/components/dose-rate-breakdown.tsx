import type { FullDoseRate, ComponentKey } from "#app/science/dose-rate.ts";
import { formatWithError } from "#app/science/precision.ts";

/*
 * Where a dose rate comes from, and where its uncertainty comes from: each part of the dose and
 * each input's share of the variance as a small bar, the inputs a lab did not give marked
 * "assumed", the publications behind each conversion named, and the cautions said plainly.
 */

const COMPONENT_WORDS: Record<ComponentKey, string> = {
  beta: "β from the sediment's K, U, Th and Rb, after grain size and water",
  gamma: "γ from the surrounding sediment, after water",
  alpha: "α on fine grains, scaled by the a-value",
  cosmic: "cosmic rays through the overburden",
  internal: "β from the grains' own K and Rb",
};

function Bar({ share, tone }: { share: number; tone: "dose" | "error" }) {
  const pct = Math.max(0, Math.min(1, share)) * 100;
  return (
    <span className="inline-block h-2.5 w-32 rounded-sm bg-[#eef4f8] align-middle" aria-hidden="true">
      <span
        className="block h-2.5 rounded-sm"
        style={{ width: `${pct}%`, background: tone === "dose" ? "#2a6590" : "#5b9cc2" }}
      />
    </span>
  );
}

function pct(x: number): string {
  return x >= 0.995 ? "100 %" : x < 0.005 ? "< 1 %" : `${Math.round(x * 100)} %`;
}

export function DoseRateBreakdown({ result, assumedFields = [] }: { result: FullDoseRate; assumedFields?: string[] }) {
  const parts = result.components.filter((c) => c.value > 0);
  const sources = [...result.sources].sort((a, b) => b.varianceShare - a.varianceShare);
  return (
    <div className="space-y-4">
      <p>
        <span className="font-semibold">{formatWithError(result.total, result.totalError, "Gy/ka")}</span>{" "}
        <span className="text-muted">({pct(result.totalError / result.total)} uncertainty, every input's error propagated)</span>
      </p>
      <section aria-labelledby="dose-parts">
        <h3 id="dose-parts" className="text-sm font-semibold">
          Where the dose comes from
        </h3>
        <ul className="mt-1 space-y-1 text-sm">
          {parts.map((c) => (
            <li key={c.key} className="flex flex-wrap items-center gap-2">
              <Bar share={c.share} tone="dose" />
              <span className="w-12 text-right tabular-nums">{pct(c.share)}</span>
              <span>{COMPONENT_WORDS[c.key]}</span>
              <span className="text-muted tabular-nums">{c.value.toFixed(3)} Gy/ka</span>
            </li>
          ))}
        </ul>
      </section>
      <section aria-labelledby="dose-uncertainty">
        <h3 id="dose-uncertainty" className="text-sm font-semibold">
          Where the uncertainty comes from
        </h3>
        <ul className="mt-1 space-y-1 text-sm">
          {sources.map((s) => (
            <li key={s.key} className="flex flex-wrap items-center gap-2">
              <Bar share={s.varianceShare} tone="error" />
              <span className="w-12 text-right tabular-nums">{pct(s.varianceShare)}</span>
              <span>
                {s.label} {s.key === "cosmicFormula" ? "" : formatWithError(s.value, s.error)}
              </span>
              {s.assumed ? (
                <span className="rounded border border-[#8bbad6] px-1 text-xs" title={s.assumption}>
                  assumed{s.assumption ? `: ${s.assumption}` : ""}
                </span>
              ) : null}
            </li>
          ))}
        </ul>
        <p className="mt-1 text-xs text-muted">Share of the variance of the total dose rate.</p>
      </section>
      <p className="text-sm text-muted">
        Computed with{" "}
        {result.citations.map((c, i) => (
          <span key={c.role}>
            {i ? "; " : ""}
            {c.source} ({c.role})
          </span>
        ))}
        .
      </p>
      {assumedFields.length || result.cautions.length ? (
        <ul className="list-disc pl-5 text-sm">
          {assumedFields.map((a) => (
            <li key={a}>Assumed: {a}.</li>
          ))}
          {result.cautions.map((c) => (
            <li key={c}>{c}</li>
          ))}
        </ul>
      ) : null}
    </div>
  );
}

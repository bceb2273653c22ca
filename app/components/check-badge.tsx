import type { CheckSeverity } from "#app/db/schema.ts";

const STYLES: Record<CheckSeverity, string> = {
  pass: "border-rule text-muted",
  note: "border-ice-300 bg-ice-50 text-ink",
  warning: "border-caution bg-caution-bg text-caution",
  conflict: "border-conflict bg-conflict-bg text-conflict font-semibold",
};

/** A check result's severity as a word in a small frame; "not checked" before the checks have run. */
export function CheckBadge({ severity }: { severity: CheckSeverity | null | undefined }) {
  if (!severity) return <span className="text-sm text-muted italic">not checked</span>;
  return <span className={`inline-block rounded border px-1.5 text-sm whitespace-nowrap ${STYLES[severity]}`}>{severity}</span>;
}

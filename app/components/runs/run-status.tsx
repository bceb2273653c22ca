import { useEffect } from "react";
import { useRevalidator } from "react-router";

const WORDS: Record<string, string> = { queued: "queued", running: "scoring", scored: "scored", failed: "failed" };

/** A run's state; while it is queued or scoring, a progress bar over the time slices read. */
export function RunStatus({
  status,
  progress,
  total,
  error,
}: {
  status: string;
  progress: number | null;
  total: number | null;
  error: string | null;
}) {
  if (status === "failed") return <span title={error ?? undefined}>failed{error ? `: ${error}` : ""}</span>;
  if (status === "queued" || status === "running") {
    const pct = total ? Math.round(((progress ?? 0) / total) * 100) : 0;
    return (
      <span className="flex items-center gap-2">
        <progress className="w-24" max={100} value={status === "queued" ? 0 : pct} aria-label={`Scoring progress ${pct} %`} />
        <span className="text-sm">{status === "queued" ? "queued" : `${pct} %`}</span>
      </span>
    );
  }
  return <span>{WORDS[status] ?? status}</span>;
}

/** Reloads the page's data every 1.5 s while something is still being scored. */
export function usePollWhile(active: boolean) {
  const revalidator = useRevalidator();
  useEffect(() => {
    if (!active) return;
    const t = setInterval(() => {
      if (revalidator.state === "idle") void revalidator.revalidate();
    }, 1500);
    return () => clearInterval(t);
  }, [active, revalidator]);
}

export const fmt = (v: number | null | undefined, digits = 1) =>
  v === null || v === undefined ? "—" : v.toLocaleString("en", { maximumFractionDigits: digits, minimumFractionDigits: digits });

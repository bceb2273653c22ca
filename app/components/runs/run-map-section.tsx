import { lazy, Suspense, useEffect, useMemo, useState } from "react";
import { useFetcher } from "react-router";
import { formatYears } from "#app/utils/age-format.ts";
import { SCORE_STOPS, type RunMapSite } from "#app/utils/run-map.ts";
import { useHydrated } from "#app/utils/use-hydrated.ts";

const RunMap = lazy(() => import("#app/components/map/run-map.client.tsx"));

type MarginSlice = { calBp: number; coordinates: number[][][][] };

/**
 * The run page's map: constraints' sites coloured by score over the run's ice at the time chosen
 * on the slider (older on the left). Margins come from /runs/:id/margins.json once the map opens.
 */
export function RunMapSection({ runId, sites }: { runId: number; sites: RunMapSite[] }) {
  const hydrated = useHydrated();
  const fetcher = useFetcher<{ slices: MarginSlice[] }>();
  useEffect(() => {
    if (hydrated && fetcher.state === "idle" && !fetcher.data) void fetcher.load(`/runs/${runId}/margins.json`);
    // eslint-disable-next-line react-hooks/exhaustive-deps -- loads once per run; `fetcher` changes identity while it loads
  }, [hydrated, runId]);
  const slices = useMemo(() => fetcher.data?.slices ?? [], [fetcher.data]);
  const [index, setIndex] = useState<number | null>(null);
  const chosen = slices.length ? slices[Math.min(index ?? Math.floor(slices.length / 2), slices.length - 1)] : null;
  const oldest = slices[0]?.calBp;
  const youngest = slices[slices.length - 1]?.calBp;
  return (
    <section aria-labelledby="run-map" className="space-y-3">
      <h2 id="run-map">Map: constraints by score over the run&apos;s ice</h2>
      <p className="max-w-3xl text-sm text-muted">
        Each disc is a site, coloured by the mean score of its constraints in this run; a heavier ring marks a site with a
        constraint whose implausibility is above 3. The blue area is the run&apos;s ice at the time on the slider, outlined from
        the file when it was scored (at most 60 times across the run&apos;s span).
      </p>
      <div className="grid gap-4 lg:grid-cols-[1fr_16rem]">
        <div>
          {hydrated ? (
            <Suspense fallback={<div className="card h-[460px]">Loading the map…</div>}>
              <RunMap
                sites={sites}
                ice={chosen?.coordinates ?? null}
                iceLabel={chosen ? `The run's ice at ${formatYears(chosen.calBp)} cal BP` : ""}
              />
            </Suspense>
          ) : (
            <div className="card h-[460px] text-muted">The map needs JavaScript.</div>
          )}
          <div className="mt-3">
            <label htmlFor="margin-time" className="font-semibold">
              Ice at{" "}
              <output htmlFor="margin-time" data-testid="margin-time">
                {chosen ? `${formatYears(chosen.calBp)} cal BP` : fetcher.state === "loading" ? "…" : "—"}
              </output>
            </label>
            <input
              id="margin-time"
              type="range"
              className="mt-1 block w-full"
              min={0}
              max={Math.max(0, slices.length - 1)}
              step={1}
              value={Math.min(index ?? Math.floor(slices.length / 2), Math.max(0, slices.length - 1))}
              disabled={!slices.length}
              aria-valuetext={chosen ? `${formatYears(chosen.calBp)} cal BP` : undefined}
              onChange={(e) => setIndex(Number(e.currentTarget.value))}
            />
            <div className="flex justify-between text-sm text-muted" aria-hidden="true">
              <span>{oldest !== undefined ? `${formatYears(oldest)} cal BP (older)` : ""}</span>
              <span>{youngest !== undefined ? `${formatYears(youngest)} cal BP (younger)` : ""}</span>
            </div>
            {fetcher.data && !slices.length ? (
              <p className="text-sm text-muted">No margin was stored for this run (scored before margins were kept).</p>
            ) : null}
          </div>
        </div>
        <ScoreLegend />
      </div>
    </section>
  );
}

function ScoreLegend() {
  return (
    <div className="space-y-3 text-sm" data-testid="score-legend">
      <p className="font-semibold">Mean score of a site&apos;s constraints</p>
      <div
        className="h-3 rounded border border-ink"
        style={{ background: `linear-gradient(to right, ${SCORE_STOPS.join(", ")})` }}
        aria-hidden="true"
      />
      <div className="flex justify-between">
        <span>0 · disagrees</span>
        <span>1 · agrees</span>
      </div>
      <ul className="space-y-1">
        <li className="flex items-center gap-2">
          <svg width="16" height="16" aria-hidden="true">
            <circle cx="8" cy="8" r="6" fill={SCORE_STOPS[1]} stroke="#1c1a17" strokeWidth="2.5" />
          </svg>
          a constraint with implausibility above 3
        </li>
        <li className="flex items-center gap-2">
          <svg width="16" height="16" aria-hidden="true">
            <rect x="1" y="3" width="14" height="10" fill="#bcd7ea" stroke="#3a7fab" strokeWidth="1.5" />
          </svg>
          the run&apos;s ice at the chosen time
        </li>
      </ul>
    </div>
  );
}

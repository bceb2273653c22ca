import { useHydrated } from "#app/utils/use-hydrated.ts";
import { lazy, Suspense, useCallback, useEffect, useMemo, useState } from "react";
import { useFetcher } from "react-router";
import type { Route } from "./+types/map";
import { requireUser } from "#app/auth/session.server.ts";
import { ErrorView } from "#app/components/error-view.tsx";
import { getDb } from "#app/db/client.server.ts";
import { MapLegend } from "#app/components/map/map-legend.tsx";
import { demoIsochrones, type MapSite } from "#app/models/registry/map.server.ts";
import { formatYears } from "#app/utils/age-format.ts";

// Leaflet needs `window`: the map is a browser-only module loaded after hydration.
const SiteMap = lazy(() => import("#app/components/map/site-map.client.tsx"));

export const meta: Route.MetaFunction = () => [{ title: "Map · Thawline" }];

export async function loader({ request }: Route.LoaderArgs) {
  await requireUser(request);
  return { reconstruction: demoIsochrones(getDb()) };
}

const TIME_STEP = 50;

export default function MapPage({ loaderData }: Route.ComponentProps) {
  const { reconstruction } = loaderData;
  const fetcher = useFetcher<{ sites: MapSite[] } | { error: string }>();
  const hydrated = useHydrated();
  const [colourBy, setColourBy] = useState<"age" | "grade">("age");
  const [showIsochrones, setShowIsochrones] = useState(true);
  const [readyCount, setReadyCount] = useState<number | null>(null);

  useEffect(() => {
    if (fetcher.state === "idle" && !fetcher.data) fetcher.load("/api/map-sites");
  }, [fetcher]);

  const sites = useMemo(() => (fetcher.data && "sites" in fetcher.data ? fetcher.data.sites : null), [fetcher.data]);
  const failed = fetcher.data && "error" in fetcher.data ? fetcher.data.error : null;

  // One time axis for sites and isochrones, so the slider and the colours agree. Site ages are
  // trimmed to their 2nd–98th percentiles so a few outliers (reworked shells, say) cannot wash
  // out the scale; older sites take the deepest colour and count as ice-free throughout.
  const ageDomain = useMemo<[number, number]>(() => {
    const siteAges = (sites ?? []).flatMap((s) => (s.med != null ? [s.med] : [])).sort((a, b) => a - b);
    const trimmed = siteAges.length
      ? [
          siteAges[Math.floor(siteAges.length * 0.02)]!,
          siteAges[Math.min(siteAges.length - 1, Math.floor(siteAges.length * 0.98))]!,
        ]
      : [];
    const ages = [...trimmed, ...(reconstruction?.ages ?? [])];
    if (ages.length === 0) return [0, 15000];
    return [Math.floor(Math.min(...ages) / TIME_STEP) * TIME_STEP, Math.ceil(Math.max(...ages) / TIME_STEP) * TIME_STEP];
  }, [sites, reconstruction]);

  // The slider counts forward in time: left = oldest, right = youngest (all land free of ice).
  const [time, setTime] = useState<number | null>(null);
  const sliderTime = time ?? ageDomain[0];
  const highlightAge = useMemo(() => {
    const ages = reconstruction?.ages ?? [];
    if (!ages.length || time == null) return null;
    return ages.reduce((best, a) => (Math.abs(a - sliderTime) < Math.abs(best - sliderTime) ? a : best), ages[0]!);
  }, [reconstruction, time, sliderTime]);

  const iceFreeCount = useMemo(
    () => (sites ?? []).filter((s) => s.med != null && s.med >= sliderTime).length,
    [sites, sliderTime],
  );

  const onReady = useCallback((n: number) => setReadyCount(n), []);

  return (
    <div>
      <header className="flex flex-wrap items-end justify-between gap-4">
        <div>
          <h1>Map of sites</h1>
          <p className="mt-1 text-muted">
            {sites
              ? `${sites.length.toLocaleString("en")} sites with determinations. Click a site for its dates.`
              : "Loading sites…"}
          </p>
        </div>
      </header>

      <div className="mt-4 grid gap-6 lg:grid-cols-[1fr_18rem]">
        <div className="relative">
          {failed ? (
            <p role="alert" className="card">
              The sites could not be loaded: {failed}
            </p>
          ) : hydrated && sites ? (
            <Suspense fallback={<MapPlaceholder text="Loading the map…" />}>
              <SiteMap
                sites={sites}
                isochrones={reconstruction?.features ?? null}
                showIsochrones={showIsochrones}
                colourBy={colourBy}
                time={time}
                highlightAge={highlightAge}
                ageDomain={ageDomain}
                onReady={onReady}
              />
            </Suspense>
          ) : (
            <MapPlaceholder text={hydrated ? "Loading sites…" : "The map needs JavaScript in the browser."} />
          )}
          {readyCount != null ? (
            <p className="sr-only" data-testid="map-ready" data-count={readyCount}>
              {readyCount} sites drawn on the map.
            </p>
          ) : null}
        </div>

        <aside aria-label="Map controls" className="space-y-6">
          <fieldset className="card">
            <legend className="label px-1">Colour sites by</legend>
            <div className="mt-1 space-y-1">
              <label className="flex items-center gap-2">
                <input
                  type="radio"
                  name="colourBy"
                  value="age"
                  checked={colourBy === "age"}
                  onChange={() => setColourBy("age")}
                />
                Deglaciation age (median of minimum-limiting and direct dates)
              </label>
              <label className="flex items-center gap-2">
                <input
                  type="radio"
                  name="colourBy"
                  value="grade"
                  checked={colourBy === "grade"}
                  onChange={() => setColourBy("grade")}
                />
                Best reliability grade
              </label>
            </div>
            <div className="mt-4">
              <MapLegend colourBy={colourBy} ageDomain={ageDomain} timeSet={time != null} />
            </div>
          </fieldset>

          <div className="card space-y-3">
            <label htmlFor="time-slider" className="label block">
              Time:{" "}
              <output htmlFor="time-slider" className="font-semibold text-ink">
                {formatYears(sliderTime)} cal BP
              </output>
            </label>
            <input
              id="time-slider"
              type="range"
              className="w-full accent-ice-700"
              min={-ageDomain[1]}
              max={-ageDomain[0]}
              step={TIME_STEP}
              value={-sliderTime}
              onChange={(e) => setTime(-Number(e.currentTarget.value))}
              aria-valuetext={`${formatYears(sliderTime)} cal BP`}
              data-testid="time-slider"
            />
            <div className="flex justify-between text-xs text-muted">
              <span>{formatYears(ageDomain[1])}</span>
              <span>{formatYears(ageDomain[0])} cal BP</span>
            </div>
            <p className="text-sm">
              {sites ? (
                <>
                  <strong>{iceFreeCount.toLocaleString("en")}</strong> of {sites.length.toLocaleString("en")} sites dated ice-free
                  by then (coloured); the rest still under ice (small grey dots).
                </>
              ) : null}
            </p>
            {time != null ? (
              <button type="button" className="btn-quiet text-sm" onClick={() => setTime(null)}>
                Back to the present
              </button>
            ) : null}
          </div>

          <div className="card">
            {reconstruction ? (
              <>
                <label className="flex items-center gap-2">
                  <input type="checkbox" checked={showIsochrones} onChange={(e) => setShowIsochrones(e.currentTarget.checked)} />
                  Ice-margin isochrones
                </label>
                <p className="mt-1 text-sm text-muted">
                  Demo reconstruction “{reconstruction.name}”: {reconstruction.ages.length} margins from{" "}
                  {formatYears(reconstruction.ages[reconstruction.ages.length - 1] ?? 0)} to{" "}
                  {formatYears(reconstruction.ages[0] ?? 0)} cal BP.
                  {highlightAge != null
                    ? ` Highlighted: the margin at ${formatYears(highlightAge)} cal BP.`
                    : " Move the time slider to highlight a margin."}
                </p>
              </>
            ) : (
              <p className="text-sm text-muted">No demo margin reconstruction is loaded.</p>
            )}
          </div>
          <p className="text-xs text-muted">Coastlines: Natural Earth (public domain), via world-atlas. Drawn offline.</p>
        </aside>
      </div>
    </div>
  );
}

function MapPlaceholder({ text }: { text: string }) {
  return (
    <div className="flex h-[68vh] min-h-[420px] items-center justify-center rounded-md border border-rule bg-ice-50 text-muted">
      {text}
    </div>
  );
}

export function ErrorBoundary({ error }: Route.ErrorBoundaryProps) {
  return <ErrorView error={error} />;
}

import { useHydrated } from "#app/utils/use-hydrated.ts";
import { useEffect, useMemo, useRef, useState } from "react";
import { data, useFetcher, type ShouldRevalidateFunctionArgs } from "react-router";
import type { Route } from "./+types/calibrate";
import { clientAddress } from "#app/auth/session.server.ts";
import {
  CalibrationPlot,
  formatCalAge,
  formatRange,
  plotWindow,
  type CalendarScale,
  type PlotCurve,
} from "#app/components/calibration-plot.tsx";
import { ErrorView } from "#app/components/error-view.tsx";
import { getDb } from "#app/db/client.server.ts";
import { calibrateItems } from "#app/models/calibration/calibrate-items.server.ts";
import { plotForItem, type CalibrationPlotData } from "#app/models/calibration/calibration-plot.server.ts";
import { listCurves } from "#app/models/calibration/curves.server.ts";
import { formatProbability } from "#app/utils/age-format.ts";
import {
  entriesFromPageInput,
  hasItem,
  isCalibrated,
  MAX_CALIBRATION_ITEMS,
  mergeResults,
  pageInputFrom,
  type ApiResponse,
  type ApiResult,
  type InputEntry,
  type PageInput,
  type TableRow,
} from "#app/utils/calibrate-input.ts";
import { hit } from "#app/utils/rate-limit.server.ts";
import { groupThousands } from "#app/science/calendar.ts";

export const meta: Route.MetaFunction = () => [{ title: "Calibrate — Thawline" }];

type CurveOption = { name: string; displayName: string; kind: "atmospheric" | "marine"; version: string };

export async function loader(_: Route.LoaderArgs) {
  // Public page: anyone may calibrate; nothing is stored.
  const curves: CurveOption[] = listCurves(getDb())
    .filter((c) => c.active)
    .map((c) => ({ name: c.name, displayName: c.displayName, kind: c.kind, version: c.version }));
  return { curves };
}

/** The page without script: a normal form post, calibrated by the same model function as the API. */
export async function action({ request }: Route.ActionArgs) {
  // Public page: the access check is the per-address rate limit, shared in spirit with the API.
  const limited = hit(`page.calibrate:${clientAddress(request)}`, 60, 60_000);
  const form = await request.formData();
  const input = pageInputFrom(form);
  const scale: CalendarScale = form.get("scale") === "bcad" ? "bcad" : "bp";
  if (!limited.allowed) {
    return data(
      {
        input,
        scale,
        rows: [] as TableRow[],
        curves: {} as ApiResponse["curves"],
        plot: null as CalibrationPlotData | null,
        message: `Too many requests; try again in ${limited.retryAfterS} s.`,
      },
      { status: 429, headers: { "Retry-After": String(limited.retryAfterS) } },
    );
  }
  const db = getDb();
  const marine = listCurves(db).some((c) => c.active && c.name === input.curve.toLowerCase() && c.kind === "marine");
  const entries = entriesFromPageInput(input, marine);
  if (entries.length > MAX_CALIBRATION_ITEMS) {
    return data(
      {
        input,
        scale,
        rows: [] as TableRow[],
        curves: {} as ApiResponse["curves"],
        plot: null as CalibrationPlotData | null,
        message: `At most ${groupThousands(MAX_CALIBRATION_ITEMS)} ages at a time.`,
      },
      { status: 400 },
    );
  }
  const items = entries.filter(hasItem).map((e) => e.item);
  const response = calibrateItems(db, items);
  const rows = mergeResults(entries, response.results);
  const first = rows.find((r) => r.result && r.item);
  const plot = first?.item ? plotForItem(db, first.item) : null;
  return { input, scale, rows, curves: response.curves, plot, message: null as string | null };
}

export function shouldRevalidate({ formAction, defaultShouldRevalidate }: ShouldRevalidateFunctionArgs) {
  // Typing calibrates through the API; that changes nothing this page loaded.
  if (formAction?.startsWith("/api/")) return false;
  return defaultShouldRevalidate;
}

const EMPTY_INPUT: PageInput = { mode: "one", age: "", error: "", curve: "intcal20", deltaR: "", deltaRError: "", list: "" };
/** Up to this many items, one request brings the densities too, so the plot needs no second call. */
const DENSITY_WITH_RESULTS = 25;
const DEBOUNCE_MS = 300;

type WindowResponse = {
  curve: Omit<PlotCurve, "points"> & { name: string };
  window: { from: number; to: number };
  points: PlotCurve["points"];
};

export default function CalibratePage({ loaderData, actionData }: Route.ComponentProps) {
  const { curves } = loaderData;
  const [input, setInput] = useState<PageInput>(actionData?.input ?? EMPTY_INPUT);
  const [scale, setScale] = useState<CalendarScale>(actionData?.scale ?? "bp");
  const [selected, setSelected] = useState<number>(0);
  const hydrated = useHydrated();

  const marineNames = useMemo(() => new Set(curves.filter((c) => c.kind === "marine").map((c) => c.name)), [curves]);
  const chosen = curves.find((c) => c.name === input.curve);
  const entries = useMemo(() => entriesFromPageInput(input, marineNames.has(input.curve)), [input, marineNames]);
  const items = useMemo(() => entries.filter(hasItem).map((e) => e.item), [entries]);
  const itemsKey = JSON.stringify(items);

  // Live results through the public API, debounced while typing.
  const calc = useFetcher<ApiResponse | { error: string }>();
  // The entries the latest request was about, and those the data on screen answers.
  const pending = useRef<InputEntry[]>([]);
  const [sent, setSent] = useState<{ entries: InputEntry[] } | null>(null);
  const submitNow = useRef<() => void>(() => {});
  // The latest inputs for the debounced request, refreshed after each render.
  useEffect(() => {
    submitNow.current = () => {
      if (items.length === 0 || items.length > MAX_CALIBRATION_ITEMS) {
        pending.current = entries;
        setSent({ entries });
        return;
      }
      pending.current = entries;
      void calc.submit(
        { determinations: items, density: items.length <= DENSITY_WITH_RESULTS },
        { method: "post", action: "/api/v1/calibrate", encType: "application/json" },
      );
    };
  });
  useEffect(() => {
    if (!hydrated) return;
    const t = setTimeout(() => submitNow.current(), DEBOUNCE_MS);
    return () => clearTimeout(t);
    // A change in what is to be calibrated (not every keystroke that leaves it the same) triggers a request.
  }, [itemsKey, entries.length, hydrated]);
  useEffect(() => {
    if (calc.state === "idle" && calc.data) setSent({ entries: pending.current });
  }, [calc.state, calc.data]);

  const apiData = calc.data;
  const apiError = apiData && "error" in apiData && !("results" in apiData) ? apiData.error : null;
  const liveResults: ApiResult[] | undefined = apiData && "results" in apiData ? apiData.results : undefined;
  const liveCurves = apiData && "curves" in apiData ? apiData.curves : undefined;

  const rows: TableRow[] = sent
    ? mergeResults(sent.entries, sent.entries.some(hasItem) ? liveResults : [])
    : (actionData?.rows ?? []);
  const usedCurves = sent ? (liveCurves ?? {}) : (actionData?.curves ?? {});
  const busy = calc.state !== "idle";

  // The plot: the selected row's density (with the results, or fetched on its own) and the curve around it.
  const plottable = rows.filter((r) => r.result && r.item);
  const target = plottable[Math.min(selected, Math.max(0, plottable.length - 1))];
  const single = useFetcher<ApiResponse | { error: string }>();
  const targetKey = target?.item ? JSON.stringify(target.item) : "";
  useEffect(() => {
    if (!target?.item || target.result?.density) return;
    void single.submit(
      { determinations: [target.item], density: true },
      { method: "post", action: "/api/v1/calibrate", encType: "application/json" },
    );
    // eslint-disable-next-line react-hooks/exhaustive-deps
  }, [targetKey, Boolean(target?.result?.density)]);
  const singleResult = single.data && "results" in single.data ? single.data.results[0] : undefined;
  const targetResult = target?.result?.density
    ? target.result
    : singleResult && isCalibrated(singleResult) && singleResult.density && String(singleResult.id) === String(target?.item?.id)
      ? singleResult
      : undefined;

  const windowFetcher = useFetcher<WindowResponse>();
  const win = targetResult?.density
    ? plotWindow({ startCalBp: targetResult.density.start_cal_bp, values: targetResult.density.values })
    : null;
  const windowUrl =
    win && target?.item ? `/api/curve-window?curve=${encodeURIComponent(target.item.curve)}&from=${win.from}&to=${win.to}` : null;
  useEffect(() => {
    if (windowUrl) void windowFetcher.load(windowUrl);
    // eslint-disable-next-line react-hooks/exhaustive-deps
  }, [windowUrl]);

  let livePlot: CalibrationPlotData | null = null;
  const w = windowFetcher.data;
  if (
    targetResult?.density &&
    target?.item &&
    w &&
    win &&
    w.window.from === win.from &&
    w.window.to === win.to &&
    w.curve.name === target.item.curve
  ) {
    livePlot = {
      curve: { ...w.curve, points: w.points },
      measurement: {
        age: target.item.c14_age,
        error: target.item.c14_error,
        deltaR: target.item.delta_r ?? 0,
        deltaRError: target.item.delta_r_error ?? 0,
      },
      calibration: {
        medianCalBp: targetResult.median_cal_bp,
        hpd68: targetResult.hpd68,
        hpd95: targetResult.hpd95,
        density: { startCalBp: targetResult.density.start_cal_bp, values: targetResult.density.values },
      },
    };
  }
  const plot = sent ? livePlot : (actionData?.plot ?? null);
  const plotPending = sent && target && !livePlot;

  const set = (patch: Partial<PageInput>) => setInput((prev) => ({ ...prev, ...patch }));

  return (
    <div className="space-y-10">
      <header className="max-w-3xl">
        <h1>Calibrate radiocarbon ages</h1>
        <p className="mt-3 text-lg">
          Type a conventional radiocarbon age and its 1σ error, or paste a list, and read off the calendar age on the current
          curves. Nothing you type here is stored in the registry.
        </p>
      </header>

      <form
        method="post"
        className="card group space-y-5"
        onSubmit={(e) => {
          const submitter = (e.nativeEvent as SubmitEvent).submitter;
          // The CSV download is a plain form post to its own route; let the browser handle it.
          if (submitter?.getAttribute("formaction")) return;
          e.preventDefault();
          submitNow.current();
        }}
      >
        <fieldset className="flex flex-wrap gap-x-6 gap-y-2">
          <legend className="label mb-2">What to calibrate</legend>
          <label className="flex items-center gap-2">
            <input
              type="radio"
              name="mode"
              value="one"
              id="mode-one"
              checked={input.mode === "one"}
              onChange={() => set({ mode: "one" })}
            />
            One age
          </label>
          <label className="flex items-center gap-2">
            <input
              type="radio"
              name="mode"
              value="list"
              id="mode-list"
              checked={input.mode === "list"}
              onChange={() => set({ mode: "list" })}
            />
            A list of ages
          </label>
        </fieldset>

        <div className="grid gap-4 sm:grid-cols-[repeat(auto-fill,minmax(11rem,1fr))] group-has-[#mode-list:checked]:hidden">
          <div className="field">
            <label htmlFor="age">¹⁴C age (yr BP)</label>
            <input
              id="age"
              name="age"
              className="input"
              inputMode="decimal"
              autoComplete="off"
              placeholder="10250"
              value={input.age}
              onChange={(e) => set({ age: e.target.value })}
            />
          </div>
          <div className="field">
            <label htmlFor="error">± 1σ error (yr)</label>
            <input
              id="error"
              name="error"
              className="input"
              inputMode="decimal"
              autoComplete="off"
              placeholder="45"
              value={input.error}
              onChange={(e) => set({ error: e.target.value })}
            />
          </div>
        </div>

        <div className="hidden group-has-[#mode-list:checked]:block">
          <div className="field">
            <label htmlFor="list">Ages, one per line</label>
            <textarea
              id="list"
              name="list"
              rows={8}
              className="input font-mono text-sm"
              spellCheck={false}
              placeholder={"a1, 10250, 45\nm1, 9500, 70, marine20, 50, 40\n8120 ± 35"}
              aria-describedby="list-help"
              value={input.list}
              onChange={(e) => set({ list: e.target.value })}
            />
            <p id="list-help" className="text-sm text-muted">
              <code>id, age, error[, curve, ΔR, ΔR error]</code> or just <code>age ± error</code>. Lines without a curve use the
              curve chosen below (and its ΔR). At most {groupThousands(MAX_CALIBRATION_ITEMS)} lines.
            </p>
          </div>
        </div>

        <div className="grid gap-4 sm:grid-cols-[repeat(auto-fill,minmax(11rem,1fr))]">
          <div className="field">
            <label htmlFor="curve">Curve</label>
            <select
              id="curve"
              name="curve"
              className="input"
              value={input.curve}
              onChange={(e) => set({ curve: e.target.value })}
            >
              {curves.map((c) => (
                <option key={c.name} value={c.name} className={c.kind === "marine" ? "marine-option" : undefined}>
                  {c.displayName} ({c.version}){c.kind === "marine" ? " — marine" : ""}
                </option>
              ))}
            </select>
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
              value={input.deltaR}
              onChange={(e) => set({ deltaR: e.target.value })}
            />
          </div>
          <div className="field hidden group-has-[.marine-option:checked]:flex">
            <label htmlFor="delta_r_error">ΔR ± 1σ (¹⁴C yr)</label>
            <input
              id="delta_r_error"
              name="delta_r_error"
              className="input"
              inputMode="decimal"
              autoComplete="off"
              placeholder="0"
              value={input.deltaRError}
              onChange={(e) => set({ deltaRError: e.target.value })}
            />
          </div>
        </div>
        {chosen?.kind === "marine" ? (
          <p className="rounded border border-caution bg-caution-bg px-3 py-2 text-sm text-caution">
            {chosen.displayName} is a global average for the non-polar ocean; add a local ΔR worked out against this curve. Its
            authors advise great caution for polar samples.
          </p>
        ) : null}

        <div className="flex flex-wrap items-center gap-x-6 gap-y-3">
          <fieldset className="flex items-center gap-4">
            <legend className="sr-only">Calendar scale</legend>
            <span className="label">Show ages as</span>
            <label className="flex items-center gap-1.5">
              <input type="radio" name="scale" value="bp" checked={scale === "bp"} onChange={() => setScale("bp")} /> cal BP
            </label>
            <label className="flex items-center gap-1.5">
              <input type="radio" name="scale" value="bcad" checked={scale === "bcad"} onChange={() => setScale("bcad")} /> BC/AD
            </label>
          </fieldset>
          <div className="ml-auto flex gap-3">
            <button type="submit" className="btn">
              Calibrate
            </button>
            <button type="submit" formAction="/calibrate/results.csv" className="btn-quiet" data-testid="download-csv">
              Download CSV
            </button>
          </div>
        </div>
      </form>

      <section aria-labelledby="results-heading" className="space-y-4">
        <div className="flex items-baseline gap-4">
          <h2 id="results-heading">Results</h2>
          <p role="status" aria-live="polite" className="text-sm text-muted">
            {busy
              ? "Calibrating…"
              : apiError
                ? ""
                : rows.length
                  ? `${rows.filter((r) => r.result).length} of ${rows.length} calibrated`
                  : ""}
          </p>
        </div>
        {apiError || actionData?.message ? (
          <p role="alert" className="rounded border border-conflict bg-conflict-bg px-3 py-2 text-conflict">
            {apiError ?? actionData?.message}
          </p>
        ) : null}
        {rows.length === 0 ? (
          <p className="text-muted">Type an age and its error above to see its calendar age.</p>
        ) : (
          <ResultsTable
            rows={rows}
            scale={scale}
            selected={target}
            onSelect={(row) => setSelected(plottable.indexOf(row))}
            canSelect={hydrated}
          />
        )}
        {Object.keys(usedCurves).length ? (
          <ul className="text-sm text-muted">
            {Object.entries(usedCurves).map(([name, c]) => (
              <li key={name}>
                <span className="font-semibold">{name}</span> ({c.version}): {c.citation}
              </li>
            ))}
          </ul>
        ) : null}
      </section>

      {plot ? (
        <section aria-labelledby="plot-heading" className="space-y-3">
          <h2 id="plot-heading">Plot{target && plottable.length > 1 ? `: ${target.id}` : ""}</h2>
          <CalibrationPlot {...plot} scale={scale} heading={plottable.length > 1 ? target?.id : undefined} />
        </section>
      ) : plotPending ? (
        <p className="text-muted">Drawing the plot…</p>
      ) : null}

      <ApiHelp />
    </div>
  );
}

function ResultsTable({
  rows,
  scale,
  selected,
  onSelect,
  canSelect,
}: {
  rows: TableRow[];
  scale: CalendarScale;
  selected: TableRow | undefined;
  onSelect: (row: TableRow) => void;
  canSelect: boolean;
}) {
  const ranges = (list: { from: number; to: number; p: number }[]) => (
    <ul>
      {list.map((r) => (
        <li key={r.from} className="whitespace-nowrap">
          {formatRange(r, scale)} <span className="text-muted">({formatProbability(r.p)})</span>
        </li>
      ))}
    </ul>
  );
  return (
    <div className="overflow-x-auto">
      <table className="data-table" data-testid="results-table">
        <thead>
          <tr>
            <th scope="col">Id</th>
            <th scope="col">¹⁴C age</th>
            <th scope="col">Curve</th>
            <th scope="col">Median {scale === "bcad" ? "(BC/AD)" : "(cal BP)"}</th>
            <th scope="col">68.3 % range</th>
            <th scope="col">95.4 % range</th>
            {canSelect ? (
              <th scope="col">
                <span className="sr-only">Plot</span>
              </th>
            ) : null}
          </tr>
        </thead>
        <tbody>
          {rows.map((row) => (
            <tr key={`${row.line}-${row.id}`} className={row === selected ? "bg-ice-50" : undefined}>
              <td>{row.id}</td>
              <td className="whitespace-nowrap">
                {row.item
                  ? `${groupThousands(Math.round(row.item.c14_age))} ± ${groupThousands(Math.round(row.item.c14_error))}`
                  : "—"}
              </td>
              <td className="whitespace-nowrap">
                {row.item ? row.item.curve : "—"}
                {row.item?.delta_r != null ? `, ΔR ${row.item.delta_r} ± ${row.item.delta_r_error ?? 0}` : ""}
              </td>
              {row.result ? (
                <>
                  <td className="font-semibold whitespace-nowrap" data-testid="median">
                    {scale === "bcad" ? formatCalAge(row.result.median_cal_bp, "bcad") : groupThousands(row.result.median_cal_bp)}
                  </td>
                  <td>{ranges(row.result.hpd68)}</td>
                  <td>{ranges(row.result.hpd95)}</td>
                  {canSelect ? (
                    <td>
                      <button
                        type="button"
                        className="btn-quiet px-2 py-0.5 text-sm"
                        aria-pressed={row === selected}
                        onClick={() => onSelect(row)}
                      >
                        Plot
                      </button>
                    </td>
                  ) : null}
                </>
              ) : (
                <td colSpan={canSelect ? 4 : 3} className={row.error ? "text-conflict" : "text-muted"}>
                  {row.error ?? "Not calibrated."}
                </td>
              )}
            </tr>
          ))}
        </tbody>
      </table>
    </div>
  );
}

function ApiHelp() {
  return (
    <section aria-labelledby="api-heading" className="card max-w-4xl space-y-3 text-[15px]">
      <h2 id="api-heading">From a script</h2>
      <p>
        <code>POST /api/v1/calibrate</code> takes JSON and needs no sign-in. Each item has an <code>id</code>,{" "}
        <code>c14_age</code> and <code>c14_error</code> (¹⁴C yr BP, 1σ), a <code>curve</code> (<code>intcal20</code> when left
        out) and, for marine curves, <code>delta_r</code> and <code>delta_r_error</code>. Add <code>"density": true</code> for
        each calendar density (<code>start_cal_bp</code> is its youngest year, one value per year). Ranges run from the oldest;{" "}
        <code>from</code> is the older bound, <code>to</code> the younger, in cal BP. At most{" "}
        {groupThousands(MAX_CALIBRATION_ITEMS)} items per request; requests are rate-limited per address.
      </p>
      <pre className="overflow-x-auto rounded bg-ice-50 p-3 text-xs">{`curl -s -X POST https://<this server>/api/v1/calibrate \\
  -H 'Content-Type: application/json' \\
  -d '{"determinations":[
        {"id":"a1","c14_age":10250,"c14_error":45,"curve":"intcal20"},
        {"id":"m1","c14_age":9500,"c14_error":70,"curve":"marine20","delta_r":50,"delta_r_error":40}]}'

{"curves":{"intcal20":{"version":"2020","citation":"…"}, …},
 "results":[{"id":"a1","median_cal_bp":…,"hpd68":[{"from":…,"to":…,"p":0.683}],"hpd95":[…]},
            {"id":"m1", …}]}`}</pre>
      <p>
        An item that cannot be calibrated (a negative error, an unknown curve, an age beyond the curve) comes back as{" "}
        <code>{`{"id": …, "error": "…"}`}</code> in its place; a malformed request is a 400 with <code>{`{"error": "…"}`}</code>.
      </p>
    </section>
  );
}

export function ErrorBoundary({ error }: Route.ErrorBoundaryProps) {
  return <ErrorView error={error} />;
}

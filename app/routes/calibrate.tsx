import { useMemo, useState } from "react";
import { data } from "react-router";
import type { Route } from "./+types/calibrate";
import { clientAddress } from "#app/auth/session.server.ts";
import { ApiHelp } from "#app/components/calibrate/api-help.tsx";
import { CurveFields } from "#app/components/calibrate/curve-fields.tsx";
import { OneAgeFields } from "#app/components/calibrate/one-age-fields.tsx";
import { ResultsSection } from "#app/components/calibrate/results-section.tsx";
import { SheetInput } from "#app/components/calibrate/sheet-input.tsx";
import { CALIBRATE_FORM_ID } from "#app/components/calibrate/results-table.tsx";
import { useCalibration, useRowPlot, type Calibration } from "#app/components/calibrate/use-calibration.ts";
import { ErrorView } from "#app/components/error-view.tsx";
import { getDb } from "#app/db/client.server.ts";
import { answerPageForm, pageCurves, receivePageForm, type PageAnswer } from "#app/models/calibration/calibrate-page.server.ts";
import { EMPTY_FORM, readPageForm, type PageForm } from "#app/utils/calibrate-page-form.ts";
import { CSV_FILE_NAME, joinResults, resultsCsv, type PageResult, type ResultRow } from "#app/utils/calibrate-results.ts";
import { hit } from "#app/utils/rate-limit.server.ts";
import { useHydrated } from "#app/utils/use-hydrated.ts";

export const meta: Route.MetaFunction = () => [{ title: "Calibrate — Thawline" }];

export async function loader(_: Route.LoaderArgs) {
  // Public page: anyone may calibrate; nothing is stored.
  return { curves: pageCurves(getDb()) };
}

/** The page without script: the form posted (a file with it, or not), answered with the results. */
export async function action({ request }: Route.ActionArgs) {
  // Public page: the access check is the per-address rate limit.
  const limited = hit(`page.calibrate:${clientAddress(request)}`, 60, 60_000);
  if (!limited.allowed) {
    return data(
      { answer: null as PageAnswer | null, message: `Too many requests; try again in ${limited.retryAfterS} s.` },
      { status: 429, headers: { "Retry-After": String(limited.retryAfterS) } },
    );
  }
  const address = clientAddress(request);
  const answer = await answerPageForm(getDb(), await receivePageForm(request), { address });
  return data({ answer, message: null as string | null }, { status: answer.status });
}

/** The answer of a post without script as the live calibration's first state, so nothing is calibrated twice. */
function calibrationFrom(answer: PageAnswer | null): Calibration | null {
  if (!answer || answer.problem) return null;
  const calibrated = answer.rows.filter((r) => r.item);
  if (calibrated.length === 0) return null;
  const results: PageResult[] = calibrated.map((r) =>
    r.result ? { id: r.item!.id, ...r.result } : { id: r.item!.id, error: r.error ?? "Not calibrated." },
  );
  return {
    key: JSON.stringify(calibrated.map((r) => r.item)),
    done: results.length,
    total: results.length,
    results,
    curves: answer.curves,
    plot: answer.form.mode === "one" ? answer.plot : null,
    error: null,
    running: false,
  };
}

function download(text: string, fileName: string) {
  const url = URL.createObjectURL(new Blob([text], { type: "text/csv;charset=utf-8" }));
  const a = document.createElement("a");
  a.href = url;
  a.download = fileName;
  document.body.append(a);
  a.click();
  a.remove();
  setTimeout(() => URL.revokeObjectURL(url), 1000);
}

export default function CalibratePage({ loaderData, actionData }: Route.ComponentProps) {
  const { curves } = loaderData;
  const answer = actionData?.answer ?? null;
  const hydrated = useHydrated();
  const [form, setForm] = useState<PageForm>(answer?.form ?? EMPTY_FORM);
  const [fileNote, setFileNote] = useState<string | null>(answer?.fileNote ?? null);
  const [plotRow, setPlotRow] = useState<number | null>(answer?.plotRow ?? null);
  const [initial] = useState(() => calibrationFrom(answer));
  const set = (patch: Partial<PageForm>) => setForm((prev) => ({ ...prev, ...patch }));

  const reading = useMemo(() => readPageForm(form, curves), [form, curves]);
  const items = useMemo(() => reading.rows.flatMap((r) => (r.item ? [r.item] : [])), [reading]);
  const key = JSON.stringify(items);
  const one = form.mode === "one";
  const calibration = useCalibration(items, { enabled: hydrated, plot: one, initial });
  const current = calibration?.key === key ? calibration : null;

  // Before the script runs the posted answer is the page; after, the live reading and calibration.
  const rows: ResultRow[] = hydrated ? joinResults(reading.rows, current?.results ?? []) : (answer?.rows ?? []);
  const fieldProblems = hydrated ? reading.fieldProblems : (answer?.fieldProblems ?? []);
  const sheet = hydrated ? reading.sheet : (answer?.sheet ?? null);

  // The one age keeps showing its last result while a new one is on its way.
  const shownOne: ResultRow | null = (() => {
    if (!one) return null;
    if (!hydrated) return answer?.rows[0] ?? null;
    const source = current ?? calibration;
    if (!source || source.results.length !== 1) return null;
    const item = (JSON.parse(source.key) as ResultRow["item"][])[0];
    return item ? (joinResults([{ row: 1, label: "Your age", item, problems: [] }], source.results)[0] ?? null) : null;
  })();

  const chosen = rows.find((r) => r.row === plotRow && r.result) ?? rows.find((r) => r.result) ?? null;
  const rowPlot = useRowPlot(!one && chosen?.item ? chosen.item : null, hydrated && !one);
  const plot = !hydrated ? (answer?.plot ?? null) : one ? (calibration?.plot ?? null) : rowPlot;
  const plotLabel = one ? null : chosen ? `${chosen.label} (row ${chosen.row})` : null;

  const running = Boolean(calibration?.running) || (hydrated && items.length > 0 && !current);
  const canDownload = rows.some((r) => r.result) && !running;

  return (
    <div className="space-y-10">
      <header className="max-w-3xl">
        <h1>Calibrate radiocarbon ages</h1>
        <p className="mt-3 text-lg">
          Type one conventional radiocarbon age and its 1σ error, or bring a whole sheet of them in the upload template&apos;s
          columns, and read each calendar age on the current curves. Nothing you bring here is stored in the registry.
        </p>
      </header>

      <form
        id={CALIBRATE_FORM_ID}
        method="post"
        encType="multipart/form-data"
        className="card group space-y-6"
        onSubmit={(e) => {
          const submitter = (e.nativeEvent as SubmitEvent).submitter;
          // With script everything is live; the CSV is made in the browser.
          if (!hydrated) return;
          e.preventDefault();
          if (submitter?.getAttribute("formaction") && canDownload) {
            download(resultsCsv(rows, current?.curves ?? {}, form.scale), CSV_FILE_NAME);
          }
        }}
      >
        <fieldset>
          <legend className="label mb-2">What to calibrate</legend>
          <div className="inline-flex overflow-hidden rounded border border-rule" role="presentation">
            {(
              [
                ["one", "One age"],
                ["sheet", "A sheet of ages"],
              ] as const
            ).map(([mode, text]) => (
              <label
                key={mode}
                className="flex cursor-pointer items-center gap-2 px-4 py-1.5 has-[:checked]:bg-ice-700 has-[:checked]:text-white has-[:focus-visible]:ring-3 has-[:focus-visible]:ring-ice-400 has-[:focus-visible]:ring-inset"
              >
                <input
                  type="radio"
                  name="mode"
                  value={mode}
                  id={`mode-${mode}`}
                  className="sr-only"
                  checked={form.mode === mode}
                  onChange={() => set({ mode })}
                />
                {text}
              </label>
            ))}
          </div>
        </fieldset>

        <div className="group-has-[#mode-sheet:checked]:hidden">
          <OneAgeFields age={form.age} error={form.error} problems={fieldProblems} onChange={set} />
        </div>
        <div className="hidden group-has-[#mode-sheet:checked]:block">
          <SheetInput
            value={form.sheet}
            hydrated={hydrated}
            fileNote={fileNote}
            onChange={(text, note) => {
              set({ sheet: text });
              setFileNote(note ?? null);
              setPlotRow(null);
            }}
          />
        </div>

        <CurveFields
          curves={curves}
          curve={form.curve}
          deltaR={form.deltaR}
          deltaRError={form.deltaRError}
          sheetMode={!one}
          problems={Object.fromEntries(fieldProblems.map((p) => [p.field, p.message]))}
          onChange={set}
        />

        <div className="flex flex-wrap items-end gap-x-6 gap-y-3 border-t border-rule pt-4">
          <div className="field">
            <label htmlFor="scale">Calendar ages in</label>
            <select
              id="scale"
              name="scale"
              className="input"
              value={form.scale}
              onChange={(e) => set({ scale: e.target.value === "bcad" ? "bcad" : "bp" })}
            >
              <option value="bp">cal BP (before AD 1950)</option>
              <option value="bcad">BC/AD</option>
            </select>
          </div>
          <div className="ml-auto flex gap-3">
            {/* Without script the form posts; with it, results follow the typing and this does nothing more. */}
            <button type="submit" className="btn">
              Calibrate
            </button>
            <button
              type="submit"
              formAction="/calibrate/results.csv"
              className="btn-quiet"
              data-testid="download-csv"
              aria-disabled={hydrated && !canDownload ? true : undefined}
            >
              Download results (CSV)
            </button>
          </div>
        </div>
      </form>

      <ResultsSection
        one={one}
        rows={rows}
        shownOne={shownOne}
        stale={one && Boolean(shownOne) && !current}
        scale={form.scale}
        sheet={sheet}
        calibration={calibration}
        running={running}
        message={actionData?.message ?? answer?.problem ?? null}
        curvesUsed={hydrated ? (current?.curves ?? calibration?.curves ?? {}) : (answer?.curves ?? {})}
        plot={plot}
        plotLabel={plotLabel}
        plotted={one ? null : (chosen?.row ?? null)}
        onPlot={hydrated ? (row) => setPlotRow(row.row) : undefined}
      />

      <ApiHelp />
    </div>
  );
}

export function ErrorBoundary({ error }: Route.ErrorBoundaryProps) {
  return <ErrorView error={error} />;
}

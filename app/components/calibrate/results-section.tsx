import { CalibrationPlot } from "#app/components/calibration-plot.tsx";
import { OneAgeSummary } from "#app/components/calibrate/one-age-summary.tsx";
import { ResultsTable } from "#app/components/calibrate/results-table.tsx";
import type { Calibration } from "#app/components/calibrate/use-calibration.ts";
import type { CalibrationPlotData } from "#app/models/calibration/calibration-plot.server.ts";
import { formatCount } from "#app/utils/age-format.ts";
import type { CalendarScale, CurvesUsed, ResultRow } from "#app/utils/calibrate-results.ts";
import type { ReadSheet } from "#app/utils/calibrate-sheet.ts";
import { curveWords } from "#app/utils/labels.ts";

function listed(names: string[], max = 8): string {
  return names.length <= max ? names.join(", ") : `${names.slice(0, max).join(", ")} and ${names.length - max} more`;
}

/** What was read from the sheet: the columns used, those set aside, and problems with the sheet as a whole. */
function SheetNotes({ sheet }: { sheet: Omit<ReadSheet, "rows"> }) {
  return (
    <div className="space-y-1 text-sm">
      {sheet.problems.map((p) => (
        <p key={p} role="alert" className="rounded border border-conflict bg-conflict-bg px-3 py-2 text-conflict">
          {p}
        </p>
      ))}
      {sheet.used.length ? (
        <p className="text-muted">
          {sheet.headerRow === null ? "No header row; columns read in order as " : "Columns read: "}
          {sheet.used.map((u, i) => (
            <span key={u.column}>
              {i > 0 ? ", " : ""}
              <code>{u.column}</code>
              {u.header && u.header !== u.column ? ` (“${u.header}”)` : ""}
            </span>
          ))}
          .
        </p>
      ) : null}
      {sheet.setAside.length ? (
        <p className="text-muted">
          Set aside (not needed to calibrate): {formatCount(sheet.setAside.length)} template{" "}
          {sheet.setAside.length === 1 ? "column" : "columns"}, {listed(sheet.setAside)}.
        </p>
      ) : null}
      {sheet.unknown.length ? <p className="text-caution">Not template columns, so not read: {listed(sheet.unknown)}.</p> : null}
    </div>
  );
}

/** The results: progress, problems, the table (or the one age's summary) and the large plot. */
export function ResultsSection(props: {
  one: boolean;
  rows: ResultRow[];
  shownOne: ResultRow | null;
  stale: boolean;
  scale: CalendarScale;
  sheet: Omit<ReadSheet, "rows"> | null;
  calibration: Calibration | null;
  running: boolean;
  message: string | null;
  curvesUsed: CurvesUsed;
  plot: CalibrationPlotData | null;
  plotLabel: string | null;
  plotted: number | null;
  onPlot?: (row: ResultRow) => void;
}) {
  const { one, rows, scale, calibration, running } = props;
  const bad = rows.filter((r) => r.problems.length > 0 || r.error);
  const calibrated = rows.filter((r) => r.result).length;
  const withItems = rows.filter((r) => r.item).length;
  const progress = calibration?.running ? calibration : null;
  const status = progress
    ? `Calibrating: ${formatCount(progress.done)} of ${formatCount(progress.total)} ages…`
    : running
      ? "Calibrating…"
      : one
        ? ""
        : rows.length
          ? `${formatCount(calibrated)} of ${formatCount(rows.length)} ${rows.length === 1 ? "row" : "rows"} calibrated`
          : "";
  return (
    <section aria-labelledby="results-heading" className="space-y-5">
      <div className="flex flex-wrap items-baseline gap-x-4 gap-y-1">
        <h2 id="results-heading">Results</h2>
        <p role="status" aria-live="polite" className="text-sm text-muted" data-testid="calibration-status">
          {status}
        </p>
      </div>
      {progress && progress.total > 100 ? (
        <progress
          className="h-2 w-full max-w-xl accent-ice-600"
          max={progress.total}
          value={progress.done}
          aria-label="Ages calibrated so far"
        />
      ) : null}
      {props.message || calibration?.error ? (
        <p role="alert" className="rounded border border-conflict bg-conflict-bg px-3 py-2 text-conflict">
          {props.message ?? calibration?.error}
        </p>
      ) : null}
      {!one && props.sheet ? <SheetNotes sheet={props.sheet} /> : null}
      {!one && bad.length ? (
        <p className="text-conflict" data-testid="problem-summary">
          {formatCount(bad.length)} of {formatCount(rows.length)} {rows.length === 1 ? "row" : "rows"} cannot be calibrated as
          they stand: {bad.length > 12 ? "see each below" : ""}
          {bad.slice(0, 12).map((r, i) => (
            <span key={r.row}>
              {i > 0 ? ", " : ""}
              <a href={`#row-${r.row}`}>row {r.row}</a>
            </span>
          ))}
          . Each says why at its cells below.
        </p>
      ) : null}
      {one ? (
        props.shownOne ? (
          <div className={props.stale ? "opacity-60 transition-opacity" : undefined}>
            <OneAgeSummary row={props.shownOne} scale={scale} />
          </div>
        ) : withItems === 0 ? (
          <p className="text-muted">Type an age and its error above to see its calendar age.</p>
        ) : null
      ) : rows.length === 0 ? (
        <p className="text-muted">
          Paste rows or drop a file above; each row&apos;s calendar age, its 95.4 % range and a sketch of its density appear here.
        </p>
      ) : (
        <ResultsTable rows={rows} scale={scale} plotted={props.plotted} onPlot={props.onPlot} pending={running} />
      )}
      {Object.keys(props.curvesUsed).length ? (
        <ul className="text-sm text-muted">
          {Object.entries(props.curvesUsed).map(([name, c]) => (
            <li key={name}>
              {curveWords(name)}: {c.citation}
            </li>
          ))}
        </ul>
      ) : null}
      {props.plot ? (
        <section aria-labelledby="plot-heading" className="space-y-3">
          <h2 id="plot-heading">{props.plotLabel ? `Plot: ${props.plotLabel}` : "Plot"}</h2>
          {/* On a phone the plot keeps a width its axis text can be read at, and scrolls sideways. */}
          <div className="overflow-x-auto">
            <div className="min-w-[620px]">
              <CalibrationPlot {...props.plot} scale={scale} heading={props.plotLabel ?? undefined} />
            </div>
          </div>
        </section>
      ) : null}
    </section>
  );
}

import { useState } from "react";
import { formatCalAge, formatRange } from "#app/components/calibration-plot.tsx";
import { withCodes } from "#app/components/api-docs/with-codes.tsx";
import { Sparkline } from "#app/components/calibrate/sparkline.tsx";
import { formatCount, formatProbability, formatWithError, UNITS } from "#app/utils/age-format.ts";
import type { ApiRange } from "#app/utils/calibrate-input.ts";
import type { CalendarScale, ResultRow } from "#app/utils/calibrate-results.ts";
import { curveWords } from "#app/utils/labels.ts";

/** The page's form: without script, a row's Plot button posts it again to draw that row. */
export const CALIBRATE_FORM_ID = "calibrate-form";

// Below the small breakpoint each row reads as a short list, each cell after its column's name.
export const CELL =
  "max-sm:flex max-sm:gap-3 max-sm:border-0 max-sm:px-0 max-sm:py-0.5 max-sm:before:w-32 max-sm:before:shrink-0 max-sm:before:text-sm max-sm:before:font-semibold max-sm:before:text-muted max-sm:before:content-[attr(data-label)]";

/** Rows drawn at first; the rest on request (the CSV always holds them all). */
const FIRST_ROWS = 200;

export function RangeList({ ranges, scale }: { ranges: ApiRange[]; scale: CalendarScale }) {
  return (
    <ul>
      {ranges.map((r) => (
        <li key={r.from} className="whitespace-nowrap">
          {formatRange(r, scale)} <span className="text-muted">({formatProbability(r.p)})</span>
        </li>
      ))}
    </ul>
  );
}

export function curveText(row: ResultRow): string {
  if (!row.item) return "";
  const curve = curveWords(row.item.curve);
  if (row.item.delta_r == null && row.item.delta_r_error == null) return curve;
  return `${curve}, ΔR ${formatWithError(row.item.delta_r ?? 0, row.item.delta_r_error ?? null)}`;
}

/**
 * One row per sheet row: lab code, age ± error, curve (and ΔR on a marine curve), median, 95.4 %
 * range and a sparkline of the calendar density; a row that cannot be calibrated says why, at
 * each of its cells. `onPlot` (with script) draws a row's large plot.
 */
export function ResultsTable({
  rows,
  scale,
  plotted,
  onPlot,
  pending,
}: {
  rows: ResultRow[];
  scale: CalendarScale;
  plotted: number | null;
  onPlot?: (row: ResultRow) => void;
  /** Rows still being calibrated show as waiting. */
  pending: boolean;
}) {
  const [showAll, setShowAll] = useState(false);
  const shown = showAll ? rows : rows.slice(0, FIRST_ROWS);
  return (
    <div className="space-y-3">
      <div className="relative overflow-x-auto">
        <table className="data-table max-sm:block" data-testid="results-table">
          <caption className="sr-only">Calibrated ages, one row per row of the sheet</caption>
          <thead className="max-sm:sr-only">
            <tr>
              <th scope="col">Row</th>
              <th scope="col">Lab code</th>
              <th scope="col">Age ({UNITS.c14Age})</th>
              <th scope="col">Curve</th>
              <th scope="col">Median ({scale === "bcad" ? "BC/AD" : UNITS.calBp})</th>
              <th scope="col">95.4 % range</th>
              <th scope="col">
                Density <span className="font-normal text-muted">(older ←)</span>
              </th>
              <th scope="col">
                <span className="sr-only">Plot</span>
              </th>
            </tr>
          </thead>
          <tbody className="max-sm:block">
            {shown.map((row) => (
              <ResultLine key={row.row} row={row} scale={scale} plotted={plotted === row.row} onPlot={onPlot} pending={pending} />
            ))}
          </tbody>
        </table>
      </div>
      {rows.length > shown.length ? (
        <button type="button" className="btn-quiet" onClick={() => setShowAll(true)}>
          Show all {formatCount(rows.length)} rows
        </button>
      ) : null}
    </div>
  );
}

function ResultLine({
  row,
  scale,
  plotted,
  onPlot,
  pending,
}: {
  row: ResultRow;
  scale: CalendarScale;
  plotted: boolean;
  onPlot?: (row: ResultRow) => void;
  pending: boolean;
}) {
  const cols = 6;
  const problems = row.problems.length > 0 || row.error;
  return (
    <tr
      id={`row-${row.row}`}
      className={`max-sm:block max-sm:border-b max-sm:border-rule max-sm:py-3 ${plotted ? "bg-ice-50" : ""}`}
      data-row={row.row}
    >
      <td className={`text-muted tabular-nums ${CELL}`} data-label="Row">
        {row.row}
      </td>
      <td className={`font-semibold whitespace-nowrap ${CELL}`} data-label="Lab code">
        {row.label}
      </td>
      {problems ? (
        <td colSpan={cols} className={`text-conflict ${CELL}`} data-label="Problems" data-testid="row-problem">
          <ul className="space-y-0.5">
            {row.problems.map((p, i) => (
              <li key={i}>
                {/* The column is named once: in front, unless the message names it already. */}
                {p.column && !p.message.includes(p.column) ? <code className="text-[13px]">{p.column}</code> : null}
                {p.column && !p.message.includes(p.column) ? ": " : ""}
                {withCodes(p.message)}
              </li>
            ))}
            {row.error ? <li>{row.error}</li> : null}
          </ul>
        </td>
      ) : (
        <>
          <td className={`whitespace-nowrap tabular-nums ${CELL}`} data-label="Age">
            {row.item ? formatWithError(row.item.c14_age, row.item.c14_error) : "—"}
            {row.note ? <span className="block text-sm text-muted">{row.note}</span> : null}
          </td>
          <td className={`whitespace-nowrap ${CELL}`} data-label="Curve">
            {curveText(row)}
          </td>
          {row.result ? (
            <>
              <td className={`font-semibold whitespace-nowrap tabular-nums ${CELL}`} data-label="Median" data-testid="median">
                {scale === "bcad" ? formatCalAge(row.result.median_cal_bp, "bcad") : formatCount(row.result.median_cal_bp)}
              </td>
              <td className={`tabular-nums ${CELL}`} data-label="95.4 % range">
                <RangeList ranges={row.result.hpd95} scale={scale} />
              </td>
              <td className={CELL} data-label="Density">
                <Sparkline spark={row.result.spark} hpd95={row.result.hpd95} median={row.result.median_cal_bp} />
              </td>
              <td className={CELL} data-label="">
                <button
                  type={onPlot ? "button" : "submit"}
                  form={onPlot ? undefined : CALIBRATE_FORM_ID}
                  name={onPlot ? undefined : "plot_row"}
                  value={row.row}
                  className="btn-quiet px-2 py-0.5 text-sm"
                  aria-pressed={plotted}
                  aria-label={`Plot ${row.label}`}
                  onClick={onPlot ? () => onPlot(row) : undefined}
                >
                  Plot
                </button>
              </td>
            </>
          ) : (
            <td colSpan={4} className={`text-muted ${CELL}`} data-label="">
              {pending ? "Calibrating…" : "Not calibrated yet."}
            </td>
          )}
        </>
      )}
    </tr>
  );
}

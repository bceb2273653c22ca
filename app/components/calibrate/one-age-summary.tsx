import { formatCalAge } from "#app/components/calibration-plot.tsx";
import { CELL, RangeList, curveText } from "#app/components/calibrate/results-table.tsx";
import { formatWithError, UNITS } from "#app/utils/age-format.ts";
import type { CalendarScale, ResultRow } from "#app/utils/calibrate-results.ts";

/** The one typed age's summary: the same median and ranges the plot's legend shows. */
export function OneAgeSummary({ row, scale }: { row: ResultRow; scale: CalendarScale }) {
  if (!row.item || !row.result) return null;
  return (
    <div className="relative overflow-x-auto">
      <table className="data-table max-sm:block" data-testid="results-table">
        <caption className="sr-only">Calibrated age</caption>
        <thead className="max-sm:sr-only">
          <tr>
            <th scope="col">Age ({UNITS.c14Age})</th>
            <th scope="col">Curve</th>
            <th scope="col">Median</th>
            <th scope="col">68.3 % range</th>
            <th scope="col">95.4 % range</th>
          </tr>
        </thead>
        <tbody className="max-sm:block">
          <tr className="max-sm:block">
            <td className={`whitespace-nowrap tabular-nums ${CELL}`} data-label="Age">
              {formatWithError(row.item.c14_age, row.item.c14_error)}
            </td>
            <td className={`whitespace-nowrap ${CELL}`} data-label="Curve">
              {curveText(row)}
            </td>
            <td
              className={`text-lg font-semibold whitespace-nowrap tabular-nums ${CELL}`}
              data-label="Median"
              data-testid="median"
            >
              {formatCalAge(row.result.median_cal_bp, scale)}
            </td>
            <td className={`tabular-nums ${CELL}`} data-label="68.3 % range" data-testid="hpd68">
              <RangeList ranges={row.result.hpd68} scale={scale} />
            </td>
            <td className={`tabular-nums ${CELL}`} data-label="95.4 % range" data-testid="hpd95">
              <RangeList ranges={row.result.hpd95} scale={scale} />
            </td>
          </tr>
        </tbody>
      </table>
    </div>
  );
}

import { scaleLinear } from "d3-scale";
import { Link } from "react-router";
import { GRADE_FILL, gradeWord } from "#app/utils/labels.ts";
import { formatYears } from "#app/utils/age-format.ts";
import { showNumber } from "#app/components/detail-list.tsx";

/*
 * A stratigraphic column beside an age axis: units stacked from the uppermost down, and each
 * date drawn at its unit's level as its median with the 95.4 % range. A deeper unit dated
 * younger than a shallower one shows up as a step to the right (older is to the left, as on
 * every calendar axis).
 */

export type ColumnDate = {
  id: number;
  labCode: string;
  /** Median cal BP when calibrated; luminescence ages fall back to their measured years. */
  ageBp: number | null;
  fromBp: number | null;
  toBp: number | null;
  calibrated: boolean;
  grade: number | null;
};

export type ColumnUnit = {
  key: string;
  label: string;
  detail: string;
  dates: ColumnDate[];
};

const WIDTH = 760;
const COLUMN_W = 150;
const LABEL_X = COLUMN_W + 14;
const PLOT_X0 = COLUMN_W + 130;
const PLOT_X1 = WIDTH - 20;
const ROW_H = 22;
const UNIT_PAD = 10;
const AXIS_H = 46;

/** `highlightId`: the date the page is about (the review page), drawn with a teal ring and a bold label. */
export function StratColumn({ units, highlightId }: { units: ColumnUnit[]; highlightId?: number }) {
  const all = units.flatMap((u) => u.dates);
  const ages = all.flatMap((d) => [d.ageBp, d.fromBp, d.toBp]).filter((v): v is number => v != null);
  if (units.length === 0 || ages.length === 0) return null;

  const lo = Math.min(...ages);
  const hi = Math.max(...ages);
  const pad = Math.max(100, (hi - lo) * 0.05);
  const x = scaleLinear()
    .domain([hi + pad, lo - pad])
    .range([PLOT_X0, PLOT_X1])
    .nice();

  const heights = units.map((u) => Math.max(40, u.dates.length * ROW_H + UNIT_PAD * 2));
  const tops = heights.map((_, i) => AXIS_H + heights.slice(0, i).reduce((sum, h) => sum + h, 0));
  const blocks = units.map((u, i) => ({ unit: u, y: tops[i]!, h: heights[i]!, shade: i % 2 === 0 ? "#dcebf4" : "#b9d6e8" }));
  const height = AXIS_H + heights.reduce((sum, h) => sum + h, 0) + 8;
  const ticks = x.ticks(6);

  return (
    <figure className="mt-4 overflow-x-auto">
      <svg
        viewBox={`0 0 ${WIDTH} ${height}`}
        width="100%"
        style={{ maxWidth: WIDTH, height: "auto" }}
        role="img"
        aria-labelledby="strat-title strat-desc"
        className="font-serif text-[13px]"
      >
        <title id="strat-title">Stratigraphic column with dates</title>
        <desc id="strat-desc">
          Units from the uppermost down on the left; each date's median and 95.4 % range in cal BP on the right, older to the
          left.
        </desc>
        {/* age axis */}
        <line x1={PLOT_X0} x2={PLOT_X1} y1={AXIS_H - 6} y2={AXIS_H - 6} stroke="#5b6975" />
        {ticks.map((t) => (
          <g key={t} transform={`translate(${x(t)},0)`}>
            <line y1={AXIS_H - 10} y2={height - 8} stroke="#d9dee2" strokeDasharray="2 3" />
            <text y={AXIS_H - 14} textAnchor="middle" fill="#5b6975">
              {formatYears(t)}
            </text>
          </g>
        ))}
        <text x={PLOT_X0} y={12} textAnchor="start" fill="#5b6975">
          ← older
        </text>
        <text x={(PLOT_X0 + PLOT_X1) / 2} y={12} textAnchor="middle" fill="#1c2a36">
          cal BP
        </text>
        <text x={PLOT_X1} y={12} textAnchor="end" fill="#5b6975">
          younger →
        </text>
        <text x={0} y={AXIS_H - 14} fill="#5b6975">
          Unit (uppermost first)
        </text>

        {blocks.map(({ unit, y: top, h, shade }) => (
          <g key={unit.key}>
            <rect x={0} y={top} width={COLUMN_W} height={h} fill={shade} stroke="#1f4e72" strokeWidth={0.75} />
            <text x={8} y={top + 16} fill="#0f273b" fontWeight={600}>
              {truncate(unit.label, 20)}
            </text>
            {unit.detail ? (
              <text x={8} y={top + 30} fill="#1f4e72">
                {truncate(unit.detail, 22)}
              </text>
            ) : null}
            <line x1={COLUMN_W} x2={PLOT_X1} y1={top + h} y2={top + h} stroke="#d9dee2" />
            {unit.dates.map((d, j) => {
              const cy = top + UNIT_PAD + j * ROW_H + ROW_H / 2;
              const fill = d.grade != null ? (GRADE_FILL[d.grade] ?? "#fff") : "#ffffff";
              const focus = d.id === highlightId;
              return (
                <g key={d.id} data-focus={focus || undefined}>
                  {focus && d.ageBp != null ? (
                    <circle cx={x(d.ageBp)} cy={cy} r={9} fill="none" stroke="#0f6f78" strokeWidth={2.5} />
                  ) : null}
                  <Link to={`/determinations/${d.id}`}>
                    <text x={LABEL_X} y={cy + 4} fill="#0f6f78" className="underline" fontWeight={focus ? 700 : undefined}>
                      {truncate(d.labCode, 16)}
                    </text>
                  </Link>
                  {d.ageBp != null ? (
                    <>
                      {d.fromBp != null && d.toBp != null ? (
                        <line x1={x(d.fromBp)} x2={x(d.toBp)} y1={cy} y2={cy} stroke="#1f4e72" strokeWidth={2} />
                      ) : null}
                      <circle cx={x(d.ageBp)} cy={cy} r={5} fill={fill} stroke="#0f273b" strokeWidth={1.2}>
                        <title>
                          {`${d.labCode}: ${formatYears(d.ageBp)} ${d.calibrated ? "cal BP (median)" : "years (measured)"}; grade ${d.grade ?? "–"} ${gradeWord(d.grade)}`}
                        </title>
                      </circle>
                    </>
                  ) : (
                    <text x={PLOT_X0} y={cy + 4} fill="#5b6975" fontStyle="italic">
                      not calibrated
                    </text>
                  )}
                </g>
              );
            })}
          </g>
        ))}
      </svg>
      <figcaption className="mt-2 text-sm text-muted">
        Dots mark medians (filled by grade, deep = secure, white = ungraded); bars the 95.4 % range. Luminescence ages are placed
        at their measured age.
      </figcaption>
    </figure>
  );
}

function truncate(s: string, n: number): string {
  return s.length > n ? `${s.slice(0, n - 1)}…` : s;
}

/** A site's sample rows as the column needs them (site page and review page; samples without a date included). */
export type ColumnRow = {
  sampleId: number;
  fieldCode: string;
  depthCm: number | null;
  stratUnit: string | null;
  stratOrder: number | null;
  id: number | null;
  labCode: string | null;
  method: string | null;
  status: string | null;
  grade: number | null;
  measuredAgeYr: number | null;
  medianCalBp: number | null;
  hpd95FromBp: number | null;
  hpd95ToBp: number | null;
};

/** Groups the ordered rows into the units of the column (by order in the column, else by sample). */
export function columnUnits(rows: readonly ColumnRow[]): ColumnUnit[] {
  const units = new Map<string, ColumnUnit & { depths: number[] }>();
  for (const r of rows) {
    const key = r.stratOrder != null ? `o${r.stratOrder}` : `s${r.sampleId}`;
    let unit = units.get(key);
    if (!unit) {
      unit = {
        key,
        label: r.stratUnit ?? (r.stratOrder != null ? `Unit ${r.stratOrder}` : r.fieldCode),
        detail: "",
        dates: [],
        depths: [],
      };
      units.set(key, unit);
    }
    if (r.depthCm != null) unit.depths.push(r.depthCm);
    if (r.id != null && r.labCode != null && r.status !== "withdrawn") {
      const calibrated = r.medianCalBp != null;
      unit.dates.push({
        id: r.id,
        labCode: r.labCode,
        ageBp: r.medianCalBp ?? (r.method === "luminescence" ? r.measuredAgeYr : null),
        fromBp: calibrated ? r.hpd95FromBp : null,
        toBp: calibrated ? r.hpd95ToBp : null,
        calibrated,
        grade: r.grade,
      });
    }
  }
  return [...units.values()].map(({ depths, ...u }) => {
    if (depths.length) {
      const a = Math.min(...depths);
      const b = Math.max(...depths);
      u.detail = a === b ? `${showNumber(a)} cm` : `${showNumber(a)}–${showNumber(b)} cm`;
    }
    return u;
  });
}

/** Whether the rows say anything about the column (an order or a depth); without, there is no column to draw. */
export function hasColumnInfo(rows: readonly ColumnRow[]): boolean {
  return rows.some((r) => r.stratOrder != null || r.depthCm != null);
}

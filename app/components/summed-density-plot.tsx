import { area, stack } from "d3-shape";
import { scaleLinear } from "d3-scale";
import { GRADE_KEYS, type SummedDensity } from "#app/science/summed-density.ts";
import { GRADE_FILL, gradeWord } from "#app/utils/labels.ts";

const UNGRADED_FILL = "#eef1f3";
const fillOf = (key: string) => (key === "ungraded" ? UNGRADED_FILL : GRADE_FILL[Number(key)]!);

/**
 * The summed calendar density of a selection, stacked by grade (deep = secure). Time runs left to
 * right, older to younger, so the picture reads as the ice retreating.
 */
export function SummedDensityPlot({
  density,
  width = 760,
  height = 220,
}: {
  density: SummedDensity;
  width?: number;
  height?: number;
}) {
  const margin = { top: 10, right: 16, bottom: 36, left: 52 };
  const n = density.total.length;
  if (density.count === 0 || n === 0) {
    return (
      <p className="card text-muted" data-testid="summed-density-empty">
        No calendar densities to sum: the filter selects nothing.
      </p>
    );
  }
  const binAge = (k: number) => density.startCalBp + k * density.step + density.step / 2;
  const x = scaleLinear()
    .domain([density.startCalBp + n * density.step, density.startCalBp])
    .range([margin.left, width - margin.right]);
  const max = Math.max(...density.total);
  const y = scaleLinear()
    .domain([0, max])
    .nice()
    .range([height - margin.bottom, margin.top]);
  const rows = density.total.map((_, k) => Object.fromEntries(GRADE_KEYS.map((g) => [g, density.byGrade[g][k]!])));
  const layers = stack<Record<string, number>>().keys([...GRADE_KEYS])(rows);
  const shape = area<[number, number]>()
    .x((_, i) => x(binAge(i)))
    .y0((d) => y(d[0]))
    .y1((d) => y(d[1]));
  const ticks = x.ticks(8);
  return (
    <figure data-testid="summed-density">
      <svg
        viewBox={`0 0 ${width} ${height}`}
        className="w-full"
        role="img"
        aria-label={`Summed calendar density of ${density.count.toLocaleString("en")} determination${density.count === 1 ? "" : "s"} by grade`}
      >
        {layers.map((layer) => (
          <path
            key={layer.key}
            d={shape(layer as unknown as [number, number][]) ?? ""}
            fill={fillOf(layer.key)}
            stroke="#173a56"
            strokeWidth={0.3}
          />
        ))}
        <line
          x1={margin.left}
          x2={width - margin.right}
          y1={height - margin.bottom}
          y2={height - margin.bottom}
          stroke="#5b6770"
        />
        {ticks.map((t) => (
          <g key={t} transform={`translate(${x(t)},${height - margin.bottom})`}>
            <line y2={5} stroke="#5b6770" />
            <text y={18} textAnchor="middle" fontSize={12} fill="#3b454c">
              {t.toLocaleString("en")}
            </text>
          </g>
        ))}
        <text x={(margin.left + width - margin.right) / 2} y={height - 4} textAnchor="middle" fontSize={12} fill="#3b454c">
          cal BP (older ← → younger)
        </text>
        {y.ticks(4).map((t) => (
          <text key={t} x={margin.left - 6} y={y(t) + 4} textAnchor="end" fontSize={11} fill="#3b454c">
            {t.toFixed(t < 1 ? 2 : 1)}
          </text>
        ))}
        <text
          transform={`translate(12,${(height - margin.bottom) / 2}) rotate(-90)`}
          textAnchor="middle"
          fontSize={11}
          fill="#3b454c"
        >
          dates per {density.step} yr
        </text>
      </svg>
      <figcaption className="mt-1 flex flex-wrap gap-x-4 gap-y-1 text-sm text-muted">
        {GRADE_KEYS.map((g) => (
          <span key={g} className="inline-flex items-center gap-1">
            <span aria-hidden className="inline-block h-3 w-4 border border-ice-300" style={{ background: fillOf(g) }} />
            {g === "ungraded" ? "ungraded" : `${g} ${gradeWord(Number(g))}`} ({density.countByGrade[g]})
          </span>
        ))}
        <span>Each date adds a total of 1; the area is the number of dates, not a rate of retreat.</span>
      </figcaption>
    </figure>
  );
}

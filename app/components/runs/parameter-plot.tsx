import { scaleLinear } from "d3-scale";

export interface PlotPoint {
  name: string;
  x: number;
  y: number;
  ruledOut: boolean;
}

const W = 320;
const H = 220;
const M = { top: 12, right: 12, bottom: 40, left: 64 };

/** log L against one parameter: one dot per run, hollow when the run is ruled out. */
export function ParameterPlot({ parameter, points }: { parameter: string; points: PlotPoint[] }) {
  const xs = points.map((p) => p.x);
  const ys = points.map((p) => p.y);
  const pad = (lo: number, hi: number) => (hi - lo || Math.abs(hi) || 1) * 0.08;
  const x = scaleLinear()
    .domain([Math.min(...xs) - pad(Math.min(...xs), Math.max(...xs)), Math.max(...xs) + pad(Math.min(...xs), Math.max(...xs))])
    .range([M.left, W - M.right])
    .nice();
  const y = scaleLinear()
    .domain([Math.min(...ys) - pad(Math.min(...ys), Math.max(...ys)), Math.max(...ys) + pad(Math.min(...ys), Math.max(...ys))])
    .range([H - M.bottom, M.top])
    .nice();
  const best = points.reduce((a, b) => (b.y > a.y ? b : a), points[0]);
  return (
    <figure className="card">
      <svg viewBox={`0 0 ${W} ${H}`} width="100%" role="img" aria-label={`log-likelihood against ${parameter}`}>
        {x.ticks(5).map((t) => (
          <g key={`x${t}`} transform={`translate(${x(t)},0)`}>
            <line y1={H - M.bottom} y2={H - M.bottom + 4} stroke="currentColor" />
            <text y={H - M.bottom + 16} textAnchor="middle" fontSize="10" fill="currentColor">
              {t}
            </text>
          </g>
        ))}
        {y.ticks(5).map((t) => (
          <g key={`y${t}`} transform={`translate(0,${y(t)})`}>
            <line x1={M.left - 4} x2={M.left} stroke="currentColor" />
            <line x1={M.left} x2={W - M.right} stroke="currentColor" strokeOpacity="0.08" />
            <text x={M.left - 6} dy="0.32em" textAnchor="end" fontSize="10" fill="currentColor">
              {t.toLocaleString("en")}
            </text>
          </g>
        ))}
        <line x1={M.left} x2={M.left} y1={M.top} y2={H - M.bottom} stroke="currentColor" />
        <line x1={M.left} x2={W - M.right} y1={H - M.bottom} y2={H - M.bottom} stroke="currentColor" />
        <text x={(M.left + W - M.right) / 2} y={H - 6} textAnchor="middle" fontSize="11" fill="currentColor">
          {parameter}
        </text>
        <text
          transform={`translate(14,${(M.top + H - M.bottom) / 2}) rotate(-90)`}
          textAnchor="middle"
          fontSize="11"
          fill="currentColor"
        >
          log L
        </text>
        {points.map((p) => (
          <circle
            key={p.name}
            cx={x(p.x)}
            cy={y(p.y)}
            r={p === best ? 5.5 : 4}
            fill={p.ruledOut ? "none" : "var(--color-accent, #2f5d7c)"}
            stroke="var(--color-accent, #2f5d7c)"
            strokeWidth="1.5"
          >
            <title>{`${p.name}: ${parameter} ${p.x}, log L ${p.y.toFixed(1)}${p.ruledOut ? " (ruled out)" : ""}`}</title>
          </circle>
        ))}
      </svg>
      <figcaption className="text-sm text-muted">
        Filled: not ruled out; hollow: ruled out. The largest dot is the best run.
      </figcaption>
    </figure>
  );
}

import { useId, useRef } from "react";
import { scaleLinear } from "d3-scale";
import { area, line } from "d3-shape";
import { formatCalBp, formatCalendarYear, groupThousands } from "#app/science/calendar.ts";
import { formatProbability } from "#app/utils/age-format.ts";
import { FigureDownloads } from "#app/components/ui/figure-downloads.tsx";

/*
 * The calibration plot: the curve as a ±1σ band over the calendar window of the result, the
 * measurement as a normal curve on the radiocarbon axis, and the calendar density along the
 * calendar axis with its 95.4 % and 68.3 % ranges shaded in two tones of the ice hue. Plain
 * SVG computed with d3-scale/d3-shape, so it renders on the server and needs no script.
 */

export type PlotRange = { from: number; to: number; p: number };
export type PlotCurve = {
  displayName: string;
  version: string;
  kind: "atmospheric" | "marine";
  citation: string;
  doi?: string | null;
  points: { calBp: number; c14: number; sigma: number }[];
};
export type PlotMeasurement = {
  age: number;
  error: number;
  deltaR?: number | null;
  deltaRError?: number | null;
  /** Freshwater (hard-water) offset on an atmospheric curve, drawn like ΔR. */
  freshwaterOffset?: number | null;
  freshwaterOffsetError?: number | null;
};
export type PlotCalibration = {
  medianCalBp: number;
  hpd68: PlotRange[];
  hpd95: PlotRange[];
  density: { startCalBp: number; values: ArrayLike<number> };
};
export type CalendarScale = "bp" | "bcad";

/** Calendar window (older, younger) a plot of this density shows: the density plus a margin. */
export function plotWindow(density: { startCalBp: number; values: ArrayLike<number> }): { from: number; to: number } {
  const young = density.startCalBp;
  const old = density.startCalBp + Math.max(0, density.values.length - 1);
  const pad = Math.max(60, Math.round((old - young) * 0.3));
  return { from: old + pad, to: Math.max(0, young - pad) };
}

export function formatCalAge(calBp: number, scale: CalendarScale): string {
  return scale === "bcad" ? formatCalendarYear(calBp) : formatCalBp(calBp);
}

/** "12,103–11,810 cal BP" or "10,154–9861 BC"; from is the older bound. */
export function formatRange(r: PlotRange, scale: CalendarScale): string {
  if (scale === "bcad") return `${formatCalendarYear(r.from)} – ${formatCalendarYear(r.to)}`;
  return `${groupThousands(Math.round(r.from))}–${groupThousands(Math.round(r.to))} cal BP`;
}

// Drawn at 880 × 540 user units and shown at that size where the page has room, so the axis text
// (14–15 units) reads at 12 px or more down to a 760 px wide figure, and prints at a paper's scale.
const W = 880;
const H = 540;
const M = { left: 92, right: 22, top: 22, bottom: 74 };
const BELL_WIDTH = 80;
const DENSITY_HEIGHT = 110;
/** Text sizes in user units, shared by every calendar picture. */
export const TICK_TEXT = 14;
export const AXIS_TEXT = 15;

export function CalibrationPlot({
  curve,
  measurement,
  calibration,
  scale = "bp",
  heading,
}: {
  curve: PlotCurve;
  measurement: PlotMeasurement;
  calibration: PlotCalibration;
  scale?: CalendarScale;
  /** What is being calibrated, e.g. a lab code; used in the accessible name. */
  heading?: string;
  /** No longer narrows the plot (it is always drawn legibly); accepted so callers keep working. */
  compact?: boolean;
}) {
  const titleId = useId();
  const descId = useId();
  const figureRef = useRef<HTMLElement>(null);
  const { density } = calibration;
  const window = plotWindow(density);
  const freshwater = curve.kind !== "marine" && measurement.freshwaterOffset != null;
  const deltaR = curve.kind === "marine" ? (measurement.deltaR ?? 0) : freshwater ? measurement.freshwaterOffset! : 0;
  const deltaRError =
    curve.kind === "marine" ? (measurement.deltaRError ?? 0) : freshwater ? (measurement.freshwaterOffsetError ?? 0) : 0;
  const points = curve.points
    .filter((p, i, all) => {
      // keep the window plus the one row beyond each end
      const next = all[i + 1];
      const prev = all[i - 1];
      return (
        (p.calBp >= window.to || (next && next.calBp >= window.to)) &&
        (p.calBp <= window.from || (prev && prev.calBp <= window.from))
      );
    })
    .map((p) => ({ calBp: p.calBp, c: p.c14 + deltaR, s: Math.sqrt(p.sigma * p.sigma + deltaRError * deltaRError) }));

  const x = scaleLinear()
    .domain([window.from, window.to])
    .range([M.left, W - M.right]);
  const bottom = H - M.bottom;
  const top = M.top;

  const mu = measurement.age;
  const sd = measurement.error;
  let yLo = mu - 4 * sd;
  let yHi = mu + 4 * sd;
  for (const p of points) {
    if (p.calBp > window.from || p.calBp < window.to) continue;
    yLo = Math.min(yLo, p.c - p.s);
    yHi = Math.max(yHi, p.c + p.s);
  }
  const ySpan = yHi - yLo || 1;
  // Room at the bottom for the calendar density, so it never sits on top of the band.
  const y = scaleLinear()
    .domain([yLo - ySpan * 0.35, yHi + ySpan * 0.05])
    .range([bottom, top])
    .nice();

  const band = area<(typeof points)[number]>()
    .x((p) => x(p.calBp))
    .y0((p) => y(p.c - p.s))
    .y1((p) => y(p.c + p.s))(points);
  const centre = line<(typeof points)[number]>()
    .x((p) => x(p.calBp))
    .y((p) => y(p.c))(points);

  // Measurement: N(mu, sd) drawn rightwards from the radiocarbon axis.
  const bell: [number, number][] = [];
  for (let k = -4; k <= 4.0001; k += 0.1) bell.push([mu + k * sd, Math.exp(-0.5 * k * k)]);
  const bellPath = area<[number, number]>()
    .x0(M.left)
    .x1((d) => M.left + d[1] * BELL_WIDTH)
    .y((d) => y(d[0]))(bell);

  // Calendar density along the calendar axis.
  const values = density.values;
  let maxP = 0;
  for (let i = 0; i < values.length; i++) maxP = Math.max(maxP, values[i]!);
  const yd = scaleLinear()
    .domain([0, maxP || 1])
    .range([bottom, bottom - DENSITY_HEIGHT]);
  const densityPoints: [number, number][] = [];
  for (let i = 0; i < values.length; i++) densityPoints.push([density.startCalBp + i, values[i]!]);
  const densityArea = area<[number, number]>()
    .x((d) => x(d[0]))
    .y0(bottom)
    .y1((d) => yd(d[1]));
  const slice = (r: PlotRange) => densityPoints.filter((d) => d[0] <= r.from && d[0] >= r.to);
  const fullPath = densityArea(densityPoints);

  const xTicks = x.ticks(8);
  const yTicks = y.ticks(6);
  const clipId = `${titleId}-clip`.replace(/:/g, "");
  const rangesText = (list: PlotRange[]) => list.map((r) => `${formatRange(r, scale)} (${formatProbability(r.p)})`).join("; ");
  const curveName = `${curve.displayName} (${curve.version})`;
  const measured = `${groupThousands(Math.round(mu))} ± ${groupThousands(Math.round(sd))} ¹⁴C yr BP`;
  const offsetValue = `${groupThousands(Math.round(deltaR))} ± ${groupThousands(Math.round(deltaRError))}`;
  const offset = curve.kind === "marine" ? `, ΔR ${offsetValue}` : freshwater ? `, freshwater offset ${offsetValue}` : "";
  const label =
    `Calibration of ${heading ? `${heading}, ` : ""}${measured} on ${curveName}${offset}: median ` +
    `${formatCalAge(calibration.medianCalBp, scale)}; 95.4 % range ${rangesText(calibration.hpd95)}.`;

  return (
    <figure ref={figureRef} className="max-w-[880px]">
      <svg
        viewBox={`0 0 ${W} ${H}`}
        role="img"
        aria-label={label}
        aria-describedby={descId}
        className="h-auto w-full bg-white"
        data-testid="calibration-plot"
      >
        <title id={titleId}>{label}</title>
        <desc id={descId}>
          The curve is drawn as a band of plus and minus one standard deviation; the measurement as a normal curve on the
          radiocarbon axis; the calendar probability along the calendar axis with the 95.4 % range lightly and the 68.3 % range
          deeply shaded.
        </desc>
        <defs>
          <clipPath id={clipId}>
            <rect x={M.left} y={top} width={W - M.left - M.right} height={bottom - top} />
          </clipPath>
        </defs>
        <rect x={M.left} y={top} width={W - M.left - M.right} height={bottom - top} fill="none" stroke="#d9dee2" />
        {yTicks.map((t) => (
          <line key={`gy${t}`} x1={M.left} x2={W - M.right} y1={y(t)} y2={y(t)} stroke="#eef1f3" />
        ))}
        <g clipPath={`url(#${clipId})`}>
          <path d={band ?? ""} fill="#8bbad6" fillOpacity={0.55} stroke="none" />
          <path d={centre ?? ""} fill="none" stroke="#1f4e72" strokeWidth={1} />
          <path d={bellPath ?? ""} fill="#0f6f78" fillOpacity={0.28} stroke="#0f6f78" strokeWidth={1} />
          <line x1={M.left} x2={W - M.right} y1={y(mu)} y2={y(mu)} stroke="#0f6f78" strokeDasharray="3 4" strokeWidth={0.8} />
          <path d={fullPath ?? ""} fill="#dcebf4" stroke="#5b9cc2" strokeWidth={0.8} />
          {calibration.hpd95.map((r) => (
            <path key={`r95-${r.from}`} d={densityArea(slice(r)) ?? ""} fill="#8bbad6" data-range="95" />
          ))}
          {calibration.hpd68.map((r) => (
            <path key={`r68-${r.from}`} d={densityArea(slice(r)) ?? ""} fill="#2a6590" data-range="68" />
          ))}
          <line
            x1={x(calibration.medianCalBp)}
            x2={x(calibration.medianCalBp)}
            y1={bottom}
            y2={bottom - DENSITY_HEIGHT - 8}
            stroke="#0f273b"
            strokeWidth={1.2}
          />
        </g>
        {/* calendar axis */}
        <CalendarAxis x={x} ticks={xTicks} y={bottom} from={M.left} to={W - M.right} labelY={H - 16} scale={scale} />
        {/* radiocarbon axis */}
        <line x1={M.left} x2={M.left} y1={top} y2={bottom} stroke="#1c2a36" />
        {yTicks.map((t) => (
          <g key={`y${t}`} transform={`translate(${M.left},${y(t)})`}>
            <line x2={-5} stroke="#1c2a36" />
            <text x={-8} dy="0.32em" textAnchor="end" fontSize={TICK_TEXT} fill="#1c2a36">
              {groupThousands(t)}
            </text>
          </g>
        ))}
        <text
          transform={`translate(20,${(top + bottom) / 2}) rotate(-90)`}
          textAnchor="middle"
          fontSize={AXIS_TEXT}
          fill="#1c2a36"
        >
          ¹⁴C yr BP
        </text>
        <text x={W - M.right - 8} y={top + 20} textAnchor="end" fontSize={TICK_TEXT} fill="#1f4e72">
          {curveName}
          {offset}
        </text>
      </svg>
      <FigureDownloads figure={figureRef} fileName={`calibration-${heading ?? "age"}`} />
      <figcaption className="mt-3 space-y-1 text-sm">
        <p>
          <span className="font-semibold">{measured}</span>
          {offset ? <span> ({offset.slice(2)})</span> : null} on {curveName}: median{" "}
          <span className="font-semibold">{formatCalAge(calibration.medianCalBp, scale)}</span>.
        </p>
        <RangeList label="68.3 %" ranges={calibration.hpd68} scale={scale} tone="bg-ice-600" />
        <RangeList label="95.4 %" ranges={calibration.hpd95} scale={scale} tone="bg-ice-300" />
        <p className="text-muted">
          Curve band: ±1σ of the curve
          {curve.kind === "marine"
            ? " with ΔR added and its error in quadrature"
            : freshwater
              ? " with the freshwater offset added and its error in quadrature"
              : ""}
          . Curve: {curve.citation}
          {curve.doi ? ` doi:${curve.doi}` : ""}
        </p>
      </figcaption>
    </figure>
  );
}

function RangeList({ label, ranges, scale, tone }: { label: string; ranges: PlotRange[]; scale: CalendarScale; tone: string }) {
  return (
    <p className="flex flex-wrap items-baseline gap-x-2">
      <span className={`inline-block h-3 w-3 self-center rounded-sm ${tone}`} aria-hidden="true" />
      <span className="font-semibold">{label}:</span>
      {ranges.map((r, i) => (
        <span key={r.from}>
          {formatRange(r, scale)} ({formatProbability(r.p)}){i < ranges.length - 1 ? ";" : ""}
        </span>
      ))}
    </p>
  );
}

/**
 * Thawline's one time convention, said on every calendar axis: older to the left, time running
 * left to right. The unit in the middle, the direction at each end.
 */
export function TimeDirection({ from, to, y, unit }: { from: number; to: number; y: number; unit: string }) {
  return (
    <g fontSize={AXIS_TEXT} fill="#1c2a36" data-time-direction="older-left">
      <text x={from} y={y} textAnchor="start" fill="#5b6975">
        ← older
      </text>
      <text x={(from + to) / 2} y={y} textAnchor="middle">
        {unit}
      </text>
      <text x={to} y={y} textAnchor="end" fill="#5b6975">
        younger →
      </text>
    </g>
  );
}

/** The calendar axis shared by the calibration plot and the luminescence density: cal BP or BC/AD, older left. */
export function CalendarAxis({
  x,
  ticks,
  y,
  from,
  to,
  labelY,
  scale,
}: {
  x: (t: number) => number;
  ticks: number[];
  y: number;
  from: number;
  to: number;
  labelY: number;
  scale: CalendarScale;
}) {
  return (
    <g>
      <line x1={from} x2={to} y1={y} y2={y} stroke="#1c2a36" />
      {ticks.map((t) => (
        <g key={`x${t}`} transform={`translate(${x(t)},${y})`}>
          <line y2={5} stroke="#1c2a36" />
          <text y={21} textAnchor="middle" fontSize={TICK_TEXT} fill="#1c2a36">
            {scale === "bcad" ? formatCalendarYear(t) : groupThousands(t)}
          </text>
        </g>
      ))}
      <TimeDirection from={from} to={to} y={labelY} unit={scale === "bcad" ? "Calendar year (BC/AD)" : "cal BP"} />
    </g>
  );
}

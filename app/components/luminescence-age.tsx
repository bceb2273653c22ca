import { useRef } from "react";
import { scaleLinear } from "d3-scale";
import { area } from "d3-shape";
import { groupThousands } from "#app/science/calendar.ts";
import { normalDensity, summariseDensity, type DensitySummary } from "#app/science/density.ts";
import { luminescenceAge, luminescenceAgeToCalBp } from "#app/science/luminescence.ts";
import { doseRateFromFields, type DoseRateFields, type FieldsDoseRate } from "#app/science/dose-rate-fields.ts";
import { formatWithError } from "#app/science/precision.ts";
import {
  CalendarAxis,
  formatCalAge,
  formatRange,
  type CalendarScale,
  type PlotRange,
} from "#app/components/calibration-plot.tsx";
import { DoseRateBreakdown } from "#app/components/dose-rate-breakdown.tsx";
import { FigureDownloads } from "#app/components/ui/figure-downloads.tsx";
import { formatProbability, UNITS } from "#app/utils/age-format.ts";

/*
 * A luminescence age: De / dose rate with its error, the dose-rate breakdown recomputed from
 * K, U and Th when they were given, and the age's normal calendar density with its 68.3 % and
 * 95.4 % ranges shaded in the same two ice tones as the calibration plot. The ranges are the
 * highest-density ranges of the same density the registry stores (normalDensity, then
 * summariseDensity), so the picture, its legend and the page's table give the same numbers.
 */

export type LuminescenceFields = DoseRateFields & {
  deGy: number | null;
  deErrorGy: number | null;
  doseRateGyPerKa: number | null;
  doseRateErrorGyPerKa: number | null;
  measurementYear: number | null;
};

/** The dose rate recomputed from the stored concentrations with every error, when they were given. */
export function recomputedDoseRate(f: LuminescenceFields): FieldsDoseRate | null {
  return doseRateFromFields(f);
}

const W = 880;
const H = 260;
const M = { left: 28, right: 28, top: 18, bottom: 64 };

/** The calendar density and its summary, computed exactly as the registry stores them. */
export function luminescenceCalendar(calBp: number, errorYears: number): { summary: DensitySummary; sd: number } {
  const sd = Math.max(errorYears, 1);
  return { summary: summariseDensity(normalDensity(calBp, sd)), sd };
}

export function LuminescenceAge({
  fields,
  scale = "bp",
  summary: stored,
  heading,
}: {
  fields: LuminescenceFields;
  scale?: CalendarScale;
  /** The stored calendar summary, when the page has one: shown as it is. */
  summary?: Pick<DensitySummary, "medianCalBp" | "hpd68" | "hpd95"> | null;
  /** What the age belongs to, e.g. a lab code; names the downloaded picture. */
  heading?: string;
}) {
  const f = fields;
  if (f.deGy == null || f.doseRateGyPerKa == null || !(f.deGy > 0) || !(f.doseRateGyPerKa > 0)) {
    return <p className="text-muted">De and dose rate are needed for an age.</p>;
  }
  const age = luminescenceAge(
    { value: f.deGy, error: f.deErrorGy ?? 0 },
    { value: f.doseRateGyPerKa, error: f.doseRateErrorGyPerKa ?? 0 },
  );
  const recomputed = recomputedDoseRate(f);
  const cal = f.measurementYear != null ? luminescenceAgeToCalBp(age.ageKa, age.errorKa, f.measurementYear) : null;
  const calendar = cal ? luminescenceCalendar(cal.calBp, cal.error) : null;
  const summary = stored ?? calendar?.summary ?? null;

  return (
    <div className="space-y-4">
      <p>
        <span className="text-lg font-semibold">{formatWithError(age.ageKa, age.errorKa, UNITS.ka)}</span>{" "}
        <span className="text-muted">
          = {formatWithError(f.deGy, f.deErrorGy, "Gy")} ÷ {formatWithError(f.doseRateGyPerKa, f.doseRateErrorGyPerKa, "Gy/ka")}{" "}
          (relative errors in quadrature, {(age.relativeError * 100).toFixed(1)} %)
        </span>
      </p>
      {cal && calendar && summary ? (
        <NormalDensityPlot
          mean={cal.calBp}
          sd={calendar.sd}
          summary={summary}
          scale={scale}
          measurementYear={f.measurementYear!}
          heading={heading}
        />
      ) : (
        <p className="text-muted">No year of measurement recorded, so the age cannot be placed on the cal BP scale.</p>
      )}
      {recomputed ? <RecomputedDoseRate recomputed={recomputed} stored={f.doseRateGyPerKa} /> : null}
    </div>
  );
}

function RecomputedDoseRate({ recomputed, stored }: { recomputed: FieldsDoseRate; stored: number }) {
  if (!recomputed.ok) {
    return <p className="text-sm text-muted">The dose rate cannot be recomputed from the concentrations: {recomputed.message}</p>;
  }
  const r = recomputed.result;
  const differs = Math.abs(r.total - stored) > 0.0005 * stored;
  return (
    <section aria-labelledby="dose-rate-heading" className="space-y-2">
      <h2 id="dose-rate-heading" className="text-base font-semibold">
        Dose rate from the concentrations
      </h2>
      {differs ? (
        <p className="text-sm text-muted">The stored dose rate ({stored.toFixed(3)} Gy/ka) differs from this recomputation.</p>
      ) : null}
      <DoseRateBreakdown result={r} assumedFields={recomputed.assumedFields} />
    </section>
  );
}

function NormalDensityPlot({
  mean,
  sd,
  summary,
  scale,
  measurementYear,
  heading,
}: {
  mean: number;
  sd: number;
  summary: Pick<DensitySummary, "medianCalBp" | "hpd68" | "hpd95">;
  scale: CalendarScale;
  measurementYear: number;
  heading?: string;
}) {
  const figureRef = useRef<HTMLElement>(null);
  // older to the left, as on every calendar axis
  const x = scaleLinear()
    .domain([mean + 4 * sd, Math.max(0, mean - 4 * sd)])
    .range([M.left, W - M.right]);
  const bottom = H - M.bottom;
  const pts: [number, number][] = [];
  for (let k = -4; k <= 4.0001; k += 0.05) pts.push([mean + k * sd, Math.exp(-0.5 * k * k)]);
  const y = scaleLinear().domain([0, 1]).range([bottom, M.top]);
  const shape = area<[number, number]>()
    .x((d) => x(d[0]))
    .y0(bottom)
    .y1((d) => y(d[1]));
  const within = (ranges: PlotRange[]) =>
    ranges.map((r) => {
      const inside = pts.filter((d) => d[0] <= r.from && d[0] >= r.to);
      // close the shape exactly at the range's ends
      const at = (t: number): [number, number] => [t, Math.exp(-0.5 * ((t - mean) / sd) ** 2)];
      return { key: `${r.from}-${r.to}`, path: shape([at(r.to), ...inside, at(r.from)]) ?? "" };
    });
  const ticks = x.ticks(7);
  const label =
    `Luminescence age as a normal calendar density: ${groupThousands(Math.round(mean))} ± ${groupThousands(Math.round(sd))} ` +
    `cal BP (measured in ${measurementYear}); 95.4 % range ${summary.hpd95.map((r) => formatRange(r, scale)).join("; ")}.`;
  return (
    <figure ref={figureRef} className="max-w-[880px]">
      <svg
        viewBox={`0 0 ${W} ${H}`}
        role="img"
        aria-label={label}
        className="h-auto w-full bg-white"
        data-testid="luminescence-density"
      >
        <title>{label}</title>
        <path d={shape(pts) ?? ""} fill="#dcebf4" stroke="#5b9cc2" />
        {within(summary.hpd95).map((r) => (
          <path key={`r95-${r.key}`} d={r.path} fill="#8bbad6" data-range="95" />
        ))}
        {within(summary.hpd68).map((r) => (
          <path key={`r68-${r.key}`} d={r.path} fill="#2a6590" data-range="68" />
        ))}
        <line x1={x(summary.medianCalBp)} x2={x(summary.medianCalBp)} y1={bottom} y2={M.top} stroke="#0f273b" strokeWidth={1.2} />
        <CalendarAxis x={x} ticks={ticks} y={bottom} from={M.left} to={W - M.right} labelY={H - 14} scale={scale} />
      </svg>
      <FigureDownloads figure={figureRef} fileName={`luminescence-${heading ?? "age"}`} />
      <figcaption className="mt-2 space-y-1 text-sm">
        <p>
          Median <span className="font-semibold">{formatCalAge(summary.medianCalBp, scale)}</span>; a normal distribution counted
          back from the year of measurement ({measurementYear}).
        </p>
        <DensityRanges label="68.3 %" ranges={summary.hpd68} scale={scale} tone="bg-ice-600" />
        <DensityRanges label="95.4 %" ranges={summary.hpd95} scale={scale} tone="bg-ice-300" />
      </figcaption>
    </figure>
  );
}

function DensityRanges({
  label,
  ranges,
  scale,
  tone,
}: {
  label: string;
  ranges: PlotRange[];
  scale: CalendarScale;
  tone: string;
}) {
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

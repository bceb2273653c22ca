import { scaleLinear } from "d3-scale";
import { area } from "d3-shape";
import { formatCalendarYear, groupThousands } from "#app/science/calendar.ts";
import { luminescenceAge, luminescenceAgeToCalBp } from "#app/science/luminescence.ts";
import { doseRateFromFields, type DoseRateFields, type FieldsDoseRate } from "#app/science/dose-rate-fields.ts";
import { formatWithError } from "#app/science/precision.ts";
import { CalendarAxis, type CalendarScale } from "#app/components/calibration-plot.tsx";
import { DoseRateBreakdown } from "#app/components/dose-rate-breakdown.tsx";

/*
 * A luminescence age: De / dose rate with its error, the dose-rate breakdown recomputed from
 * K, U and Th when they were given, and the age's normal calendar density with its 1σ and 2σ
 * ranges (68.3 % and 95.4 %) shaded in the same two ice tones as the calibration plot.
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

const W = 640;
const H = 200;
const M = { left: 20, right: 20, top: 16, bottom: 46 };

export function LuminescenceAge({ fields, scale = "bp" }: { fields: LuminescenceFields; scale?: CalendarScale }) {
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
  const fmt = (calBp: number) => (scale === "bcad" ? formatCalendarYear(calBp) : `${groupThousands(Math.round(calBp))} cal BP`);

  return (
    <div className="space-y-4">
      <p>
        <span className="text-lg font-semibold">{formatWithError(age.ageKa, age.errorKa, "ka")}</span>{" "}
        <span className="text-muted">
          = {formatWithError(f.deGy, f.deErrorGy, "Gy")} ÷ {formatWithError(f.doseRateGyPerKa, f.doseRateErrorGyPerKa, "Gy/ka")}
          (relative errors in quadrature, {(age.relativeError * 100).toFixed(1)} %)
        </span>
      </p>
      {cal ? (
        <NormalDensityPlot mean={cal.calBp} sd={Math.max(cal.error, 1)} scale={scale} measurementYear={f.measurementYear!} />
      ) : (
        <p className="text-muted">No year of measurement recorded, so the age cannot be placed on the cal BP scale.</p>
      )}
      {cal ? (
        <ul className="text-sm">
          <li>
            <span className="font-semibold">68.3 %:</span> {fmt(cal.calBp + cal.error)} – {fmt(cal.calBp - cal.error)}
          </li>
          <li>
            <span className="font-semibold">95.4 %:</span> {fmt(cal.calBp + 2 * cal.error)} – {fmt(cal.calBp - 2 * cal.error)}
          </li>
        </ul>
      ) : null}
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
  scale,
  measurementYear,
}: {
  mean: number;
  sd: number;
  scale: CalendarScale;
  measurementYear: number;
}) {
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
  const within = (n: number) => pts.filter((d) => Math.abs(d[0] - mean) <= n * sd);
  const ticks = x.ticks(6);
  const label =
    `Luminescence age as a normal calendar density: ${groupThousands(Math.round(mean))} ± ${groupThousands(Math.round(sd))} ` +
    `cal BP (measured in ${measurementYear}).`;
  return (
    <svg viewBox={`0 0 ${W} ${H}`} role="img" aria-label={label} className="h-auto w-full max-w-2xl bg-white">
      <title>{label}</title>
      <path d={shape(pts) ?? ""} fill="#dcebf4" stroke="#5b9cc2" />
      <path d={shape(within(2)) ?? ""} fill="#8bbad6" />
      <path d={shape(within(1)) ?? ""} fill="#2a6590" />
      <line x1={x(mean)} x2={x(mean)} y1={bottom} y2={M.top} stroke="#0f273b" />
      <CalendarAxis x={x} ticks={ticks} y={bottom} from={M.left} to={W - M.right} labelY={H - 8} scale={scale} />
    </svg>
  );
}

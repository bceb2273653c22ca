import { scaleLinear } from "d3-scale";
import { area } from "d3-shape";
import { formatCalendarYear, groupThousands } from "#app/science/calendar.ts";
import {
  CONVERSION_FACTORS,
  doseRate,
  luminescenceAge,
  luminescenceAgeToCalBp,
  type ConversionFactorKey,
  type DoseRateBreakdown,
} from "#app/science/luminescence.ts";
import { CalendarAxis, type CalendarScale } from "#app/components/calibration-plot.tsx";

/*
 * A luminescence age: De / dose rate with its error, the dose-rate breakdown recomputed from
 * K, U and Th when they were given, and the age's normal calendar density with its 1σ and 2σ
 * ranges (68.3 % and 95.4 %) shaded in the same two ice tones as the calibration plot.
 */

export type LuminescenceFields = {
  deGy: number | null;
  deErrorGy: number | null;
  doseRateGyPerKa: number | null;
  doseRateErrorGyPerKa: number | null;
  measurementYear: number | null;
  kPercent?: number | null;
  uPpm?: number | null;
  thPpm?: number | null;
  waterContentFraction?: number | null;
  burialDepthM?: number | null;
  densityGPerCm3?: number | null;
  conversionFactors?: string | null;
};

/** Bulk density assumed for the cosmic dose rate when none was recorded (said on screen). */
const ASSUMED_DENSITY = 2.0;

export function recomputedDoseRate(f: LuminescenceFields): { breakdown: DoseRateBreakdown; notes: string[] } | null {
  if (f.kPercent == null || f.uPpm == null || f.thPpm == null) return null;
  const notes: string[] = [];
  const factors: ConversionFactorKey =
    f.conversionFactors && f.conversionFactors in CONVERSION_FACTORS
      ? (f.conversionFactors as ConversionFactorKey)
      : "guerin2011";
  const density = f.densityGPerCm3 ?? ASSUMED_DENSITY;
  if (f.densityGPerCm3 == null)
    notes.push(`No bulk density recorded; ${ASSUMED_DENSITY} g/cm³ assumed for the cosmic dose rate.`);
  if (f.waterContentFraction == null) notes.push("No water content recorded; computed dry.");
  if (f.burialDepthM == null) notes.push("No burial depth recorded; the cosmic dose rate is left out.");
  try {
    const breakdown = doseRate({
      k: { value: f.kPercent, error: 0 },
      u: { value: f.uPpm, error: 0 },
      th: { value: f.thPpm, error: 0 },
      water: { value: f.waterContentFraction ?? 0, error: 0 },
      factors,
      burial: { depthM: f.burialDepthM ?? 0, density },
      cosmicOverride: f.burialDepthM == null ? { value: 0, error: 0 } : undefined,
    });
    return { breakdown, notes: [...notes, ...breakdown.notes] };
  } catch {
    return null;
  }
}

/** Display only: at most three decimals, trailing zeros dropped. */
function num(x: number): string {
  return String(Number(x.toFixed(3)));
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
  const digits = age.ageKa < 10 ? 2 : 1;

  return (
    <div className="space-y-4">
      <p>
        <span className="text-lg font-semibold">
          {age.ageKa.toFixed(digits)} ± {age.errorKa.toFixed(digits)} ka
        </span>{" "}
        <span className="text-muted">
          = {num(f.deGy)} ± {num(f.deErrorGy ?? 0)} Gy ÷ {num(f.doseRateGyPerKa)} ± {num(f.doseRateErrorGyPerKa ?? 0)} Gy/ka
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
      {recomputed ? <DoseRateTable result={recomputed} stored={f.doseRateGyPerKa} /> : null}
    </div>
  );
}

function DoseRateTable({ result, stored }: { result: { breakdown: DoseRateBreakdown; notes: string[] }; stored: number }) {
  const b = result.breakdown;
  const rows: [string, number][] = [
    ["Beta", b.beta],
    ["Gamma", b.gamma],
    ["Alpha", b.alpha],
    ["Cosmic", b.cosmic],
    ["Internal", b.internal],
  ];
  return (
    <div>
      <table className="data-table max-w-md">
        <caption className="mb-1 text-left text-sm font-semibold text-muted">
          Dose rate recomputed from K, U and Th ({CONVERSION_FACTORS[b.factors].citation})
        </caption>
        <thead>
          <tr>
            <th scope="col">Component</th>
            <th scope="col" className="text-right">
              Gy/ka
            </th>
          </tr>
        </thead>
        <tbody>
          {rows.map(([name, v]) => (
            <tr key={name}>
              <td>{name}</td>
              <td className="text-right">{v.toFixed(3)}</td>
            </tr>
          ))}
          <tr>
            <th scope="row" className="text-left">
              Total (recomputed)
            </th>
            <td className="text-right font-semibold">{b.total.toFixed(3)}</td>
          </tr>
          <tr>
            <td>Total as submitted</td>
            <td className="text-right">{stored.toFixed(3)}</td>
          </tr>
        </tbody>
      </table>
      {result.notes.length ? (
        <ul className="mt-2 list-disc pl-5 text-sm text-muted">
          {result.notes.map((n) => (
            <li key={n}>{n}</li>
          ))}
        </ul>
      ) : null}
      <p className="mt-1 text-sm text-muted">Recomputed without the concentrations' errors, which are not recorded.</p>
    </div>
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

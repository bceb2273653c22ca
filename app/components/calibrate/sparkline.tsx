import { formatCalRange } from "#app/utils/age-format.ts";
import type { ApiRange } from "#app/utils/calibrate-input.ts";
import type { Spark } from "#app/utils/calibrate-results.ts";

const W = 150;
const H = 32;
const BASE = H - 5;

/**
 * A row's calendar density in a line of text's height: older on the left, as on every time axis
 * here; the 95.4 % range as a bar under it and the median as a tick. Each row on its own window.
 */
export function Sparkline({ spark, hpd95, median }: { spark: Spark; hpd95: ApiRange[]; median: number }) {
  const span = spark.older - spark.younger || 1;
  const x = (calBp: number) => ((spark.older - calBp) / span) * W;
  const n = spark.values.length;
  const step = n > 0 ? W / n : W;
  let d = `M0,${BASE}`;
  spark.values.forEach((v, i) => {
    const y = BASE - v * (BASE - 2);
    d += ` L${(i * step).toFixed(1)},${y.toFixed(1)} L${((i + 1) * step).toFixed(1)},${y.toFixed(1)}`;
  });
  d += ` L${W},${BASE} Z`;
  const label = `Calendar density from ${formatCalRange(spark.older, spark.younger)} cal BP, older on the left`;
  return (
    <svg width={W} height={H} viewBox={`0 0 ${W} ${H}`} role="img" aria-label={label} className="block" data-testid="sparkline">
      <title>{label}</title>
      <path d={d} fill="#b9d6e8" stroke="#3a7fab" strokeWidth={0.8} />
      {hpd95.map((r) => (
        <rect
          key={r.from}
          x={Math.max(0, x(r.from))}
          width={Math.max(1, Math.min(W, x(r.to)) - Math.max(0, x(r.from)))}
          y={BASE + 1.5}
          height={2.5}
          fill="#1f4e72"
        />
      ))}
      <line x1={x(median)} x2={x(median)} y1={1} y2={BASE} stroke="#0f273b" strokeWidth={1} />
    </svg>
  );
}

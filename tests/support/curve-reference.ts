// An independent calibration for reference values in tests: reads the published curve CSV itself
// and shares no code with app/science.
import { readCurveText } from "#tests/unit/science/curve-files.ts";

/**
 * An independent calibration for reference: read the published CSV here, interpolate it
 * linearly at every calendar year, evaluate the A4 likelihood (in age or in F14C), normalise,
 * and take the median from the running sum. Shares no code with app/science.
 */
export function directIntegration(
  file: "intcal20.csv" | "marine20.csv",
  m: { age: number; error: number } | { f14c: number; f14cError: number },
): { start: number; p: number[]; median: number } {
  const rows = readCurveText(file)
    .split(/\r?\n/)
    .slice(1)
    .filter((l) => l.trim())
    .map((l) => l.split(",").map(Number))
    .sort((a, b) => a[0] - b[0]);
  const start = rows[0][0];
  const end = rows[rows.length - 1][0];
  const p: number[] = [];
  let j = 0;
  for (let t = start; t <= end; t++) {
    while (rows[j + 1][0] < t) j++;
    const [x0, c0, s0] = rows[j];
    const [x1, c1, s1] = rows[Math.min(j + 1, rows.length - 1)];
    const w = x1 === x0 ? 0 : (t - x0) / (x1 - x0);
    const c = c0 + w * (c1 - c0);
    const s = s0 + w * (s1 - s0);
    if ("age" in m) {
      const v = m.error ** 2 + s ** 2;
      p.push(Math.exp(-((m.age - c) ** 2) / (2 * v)) / Math.sqrt(v));
    } else {
      const fc = Math.exp(-c / 8033);
      const v = m.f14cError ** 2 + ((fc * s) / 8033) ** 2;
      p.push(Math.exp(-((m.f14c - fc) ** 2) / (2 * v)) / Math.sqrt(v));
    }
  }
  const total = p.reduce((a, b) => a + b, 0);
  let cum = 0;
  let median = Number.NaN;
  for (let i = 0; i < p.length; i++) {
    p[i] /= total;
    if (Number.isNaN(median) && cum + p[i] >= 0.5) median = start + i - 0.5 + (0.5 - cum) / p[i];
    cum += p[i];
  }
  return { start, p, median };
}

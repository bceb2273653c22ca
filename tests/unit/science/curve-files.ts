// Test-only access to the published curve files, which live outside the repository.
import { readFileSync } from "node:fs";
import path from "node:path";
import { parseCurveCsv, type Curve } from "#app/science/curve.ts";

export function curvesDir(): string {
  return process.env.CURVES_DIR ?? path.resolve(process.cwd(), "../shared/curves");
}

export function readCurveText(file: "intcal20.csv" | "marine20.csv"): string {
  return readFileSync(path.join(curvesDir(), file), "utf8");
}

const cache = new Map<string, Curve>();

export function loadCurve(name: "intcal20" | "marine20"): Curve {
  const hit = cache.get(name);
  if (hit) return hit;
  const parsed = parseCurveCsv(readCurveText(`${name}.csv`), name);
  if (!parsed.ok) throw new Error(parsed.issues.map((i) => `${i.line ?? ""} ${i.message}`).join("\n"));
  cache.set(name, parsed.curve);
  return parsed.curve;
}

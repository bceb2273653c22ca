// Inputs of a dose rate as a lab reports them, and the documented default error for each one a
// lab leaves without an error. Every default is shown on the determination as assumed.

/** A measured value; the error may be missing. */
export interface Given {
  value: number;
  error?: number | null;
}

export interface Resolved {
  value: number;
  error: number;
  assumed: boolean;
  assumption?: string;
}

export type SourceKey =
  "k" | "u" | "th" | "rb" | "water" | "aValue" | "internalK" | "internalRb" | "depth" | "density" | "labCosmic" | "cosmicFormula";

export interface AssumedError {
  /** Relative (fraction of the value) or absolute (in the input's unit). */
  kind: "relative" | "absolute";
  amount: number;
  /** Shown on the determination beside the value. */
  text: string;
}

/**
 * Defaults when a lab gives a value without its error (common practice, assumed — a specialist
 * would rather see the lab's own): concentrations at the precision typical of their methods,
 * water content as a field history is rarely known better than ±5 percentage points, depth and
 * density as read in the field.
 */
export const ASSUMED_ERRORS: Readonly<Record<Exclude<SourceKey, "cosmicFormula">, AssumedError>> = {
  k: { kind: "relative", amount: 0.05, text: "±5 % of K (assumed)" },
  u: { kind: "relative", amount: 0.1, text: "±10 % of U (assumed)" },
  th: { kind: "relative", amount: 0.1, text: "±10 % of Th (assumed)" },
  rb: { kind: "relative", amount: 0.1, text: "±10 % of Rb (assumed)" },
  water: { kind: "absolute", amount: 0.05, text: "±0.05 water fraction, i.e. ±5 percentage points (assumed)" },
  aValue: { kind: "absolute", amount: 0.02, text: "±0.02 on the a-value (assumed)" },
  internalK: { kind: "absolute", amount: 0.5, text: "±0.5 % internal K (assumed)" },
  internalRb: { kind: "absolute", amount: 100, text: "±100 ppm internal Rb (assumed)" },
  depth: { kind: "relative", amount: 0.1, text: "±10 % of the burial depth (assumed)" },
  density: { kind: "absolute", amount: 0.1, text: "±0.1 g/cm³ density (assumed)" },
  labCosmic: { kind: "relative", amount: 0.1, text: "±10 % of the lab's cosmic dose rate (assumed)" },
};

export function resolve(g: Given, assumed: AssumedError): Resolved {
  if (g.error != null) return { value: g.value, error: g.error, assumed: false };
  const error = assumed.kind === "relative" ? Math.abs(g.value) * assumed.amount : assumed.amount;
  return { value: g.value, error, assumed: true, assumption: assumed.text };
}

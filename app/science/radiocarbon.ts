// Radiocarbon measurement arithmetic: F14C, conventional ages, δ13C normalisation,
// and the decision whether a measurement can be calibrated at all.
// Formulas: Stuiver & Polach 1977; Reimer, Brown & Reimer 2004.

import { groupThousands } from "./calendar.ts";

/** Libby mean-life: 5568 / ln 2, fixed by convention for conventional ages. */
export const LIBBY_MEAN_LIFE = 8033;
/** Cambridge mean-life: 5730 / ln 2, used only for Δ14C decay correction. */
export const CAMBRIDGE_MEAN_LIFE = 8267;

export type NormalisationForm = "exact" | "linear";

export function f14cToAge(f14c: number): number {
  return -LIBBY_MEAN_LIFE * Math.log(f14c);
}

export function ageToF14c(age: number): number {
  return Math.exp(-age / LIBBY_MEAN_LIFE);
}

/** First-order propagation; valid while σ_F is small relative to F. */
export function f14cErrorToAgeError(f14c: number, f14cError: number): number {
  return (LIBBY_MEAN_LIFE * f14cError) / f14c;
}

export function ageErrorToF14cError(age: number, ageError: number): number {
  return (ageToF14c(age) * ageError) / LIBBY_MEAN_LIFE;
}

export function ageFromF14c(f14c: number, f14cError: number): { age: number; error: number } {
  return { age: f14cToAge(f14c), error: f14cErrorToAgeError(f14c, f14cError) };
}

export function f14cFromAge(age: number, ageError: number): { f14c: number; error: number } {
  return { f14c: ageToF14c(age), error: ageErrorToF14cError(age, ageError) };
}

export function f14cToPmc(f14c: number): number {
  return 100 * f14c;
}

export function pmcToF14c(pmc: number): number {
  return pmc / 100;
}

/** D14C in ‰: the F14C deviation from the standard, without decay correction. */
export function f14cToD14c(f14c: number): number {
  return (f14c - 1) * 1000;
}

/**
 * Δ14C in ‰ for a sample that grew in `yearOfGrowth` (signed year: AD positive, BC negative,
 * as the published formula takes it). Decay is corrected with the Cambridge half-life.
 */
export function f14cToDelta14c(f14c: number, yearOfGrowth: number): number {
  return (f14c * Math.exp((1950 - yearOfGrowth) / CAMBRIDGE_MEAN_LIFE) - 1) * 1000;
}

/** Multiplier that takes a measured activity (or F) to the δ13C = −25 ‰ reference. */
export function normalisationFactor(d13c: number, form: NormalisationForm = "exact"): number {
  if (form === "linear") return 1 - (2 * (25 + d13c)) / 1000;
  const r = 0.975 / (1 + d13c / 1000);
  return r * r;
}

/** Years added to an unnormalised age by normalisation (positive when δ13C > −25 ‰). */
export function normalisationShiftYears(d13c: number, form: NormalisationForm = "exact"): number {
  return -LIBBY_MEAN_LIFE * Math.log(normalisationFactor(d13c, form));
}

export function normaliseF14c(
  f14c: number,
  f14cError: number,
  d13c: number,
  form: NormalisationForm = "exact",
): { f14c: number; error: number } {
  const k = normalisationFactor(d13c, form);
  return { f14c: f14c * k, error: f14cError * k };
}

/** The age error is unchanged: the factor scales F and σ_F alike. */
export function normaliseAge(age: number, d13c: number, form: NormalisationForm = "exact"): number {
  return age + normalisationShiftYears(d13c, form);
}

export type RadiocarbonMeasurementInput =
  { f14c: number; error: number; age?: undefined } | { age: number; error: number; f14c?: undefined };

export interface NormalisationInput {
  /** Either F14C ± error or a radiocarbon age ± error (years BP). */
  measurement: RadiocarbonMeasurementInput;
  d13c?: number | null;
  /** True for a lab's conventional age or for F14C as defined (both already at −25 ‰). */
  alreadyNormalised: boolean;
  /**
   * The reported value was normalised to δ13C = 0 ‰ instead of −25 ‰ (older practice for marine
   * shells); it is brought to −25 ‰ here, which makes the age older by 406.8 yr (exact form).
   */
  normalisedToZeroPermil?: boolean;
  form?: NormalisationForm;
}

export interface NormalisedMeasurement {
  f14c: number;
  f14cError: number;
  /** Conventional age; may be non-finite when F14C ≤ 0 (no age exists). */
  age: number;
  ageError: number;
  /** True only when this call applied the correction. */
  normalisedHere: boolean;
  /** Years the correction added to the age (0 when nothing was applied). */
  correctionYears: number;
}

export type RadiocarbonField = "f14c" | "age" | "error" | "d13c";

export class RadiocarbonInputError extends Error {
  readonly field: RadiocarbonField;
  constructor(message: string, field: RadiocarbonField) {
    super(message);
    this.name = "RadiocarbonInputError";
    this.field = field;
  }
}

/**
 * Brings a measurement to the −25 ‰ reference exactly once: the `alreadyNormalised` flag is the
 * single source of truth, so a conventional age is never corrected a second time.
 * Works in F14C space so that ages near background and F-based inputs share one path.
 */
export function normaliseMeasurement(input: NormalisationInput): NormalisedMeasurement {
  const m = input.measurement;
  const form = input.form ?? "exact";
  if (!Number.isFinite(m.error) || m.error < 0) {
    throw new RadiocarbonInputError("The error must be a number of zero or more.", "error");
  }
  let f: number;
  let sf: number;
  if (m.f14c !== undefined) {
    // A blank-corrected F14C can fall slightly below zero near background; that is still a
    // measurement (it yields a limit), so only non-numbers are refused here.
    if (!Number.isFinite(m.f14c)) {
      throw new RadiocarbonInputError("F¹⁴C must be a number.", "f14c");
    }
    f = m.f14c;
    sf = m.error;
  } else {
    if (!Number.isFinite(m.age)) {
      throw new RadiocarbonInputError("The radiocarbon age must be a number.", "age");
    }
    f = ageToF14c(m.age);
    sf = ageErrorToF14cError(m.age, m.error);
  }
  let correctionYears = 0;
  let normalisedHere = false;
  if (input.alreadyNormalised && input.normalisedToZeroPermil) {
    // From the 0 ‰ reference to −25 ‰: the factor of δ13C = 0 ‰, whatever the sample's δ13C.
    const n = normaliseF14c(f, sf, 0, form);
    f = n.f14c;
    sf = n.error;
    correctionYears = normalisationShiftYears(0, form);
    normalisedHere = true;
  } else if (!input.alreadyNormalised) {
    const d13c = input.d13c;
    if (d13c === undefined || d13c === null || !Number.isFinite(d13c)) {
      throw new RadiocarbonInputError("δ13C is needed to normalise a measurement that is not already conventional.", "d13c");
    }
    if (d13c <= -1000) {
      throw new RadiocarbonInputError("δ13C must be greater than −1000 ‰.", "d13c");
    }
    const n = normaliseF14c(f, sf, d13c, form);
    f = n.f14c;
    sf = n.error;
    correctionYears = normalisationShiftYears(d13c, form);
    normalisedHere = true;
  }
  let age: number;
  let ageError: number;
  if (m.age !== undefined) {
    // Keep an age input exact instead of round-tripping it through exp/log.
    age = m.age + correctionYears;
    ageError = m.error;
  } else {
    age = f > 0 ? f14cToAge(f) : Number.POSITIVE_INFINITY;
    ageError = f > 0 ? f14cErrorToAgeError(f, sf) : Number.POSITIVE_INFINITY;
  }
  return { f14c: f, f14cError: sf, age, ageError, normalisedHere, correctionYears };
}

/** Minimum ("greater than") age for a measurement indistinguishable from background. */
export function limitAgeFromF14c(f14c: number, f14cError: number): number {
  return f14cToAge(f14c + 2 * f14cError);
}

/** Near background (van der Plicht & Hogg 2006, from memory): F below 2σ of zero. */
export function isNearBackground(f14c: number, f14cError: number): boolean {
  return f14c < 2 * f14cError;
}

/** Post-bomb only when F exceeds 1 significantly: by more than twice its error. */
export function isPostBomb(f14c: number, f14cError: number): boolean {
  return f14c - 2 * f14cError > 1;
}

export interface RadiocarbonInput extends NormalisationInput {
  /** The lab already reported the result as "greater than" this age. */
  reportedAsLimit?: boolean;
}

export type RadiocarbonInterpretation =
  | {
      kind: "age";
      age: number;
      error: number;
      f14c: number;
      f14cError: number;
      normalisedHere: boolean;
      correctionYears: number;
      message: string;
    }
  | { kind: "limit"; minAge: number; f14c: number; f14cError: number; message: string }
  | { kind: "postbomb"; f14c: number; f14cError: number; age: number; message: string }
  | { kind: "invalid"; field: RadiocarbonField; message: string };

function fmtYears(x: number): string {
  return groupThousands(Math.round(x));
}

/**
 * Decides what a radiocarbon measurement can be used for. Only kind 'age' is calibratable:
 * a limit has no finite likelihood peak, and a post-bomb F14C lies beyond AD 1950 where the
 * bundled curves end. Bad input comes back as kind 'invalid' rather than throwing, so forms
 * and upload rows can show the message beside the field.
 */
export function interpretRadiocarbon(input: RadiocarbonInput): RadiocarbonInterpretation {
  let n: NormalisedMeasurement;
  try {
    n = normaliseMeasurement(input);
  } catch (e) {
    if (e instanceof RadiocarbonInputError) return { kind: "invalid", field: e.field, message: e.message };
    throw e;
  }
  if (input.reportedAsLimit) {
    // A limit given as F14C is the age of F + 2σ (CHECK_VALUES A1); one given as an age stands.
    const fromF = input.measurement.f14c !== undefined;
    const minAge = fromF ? limitAgeFromF14c(n.f14c, n.f14cError) : n.age;
    if (!Number.isFinite(minAge)) {
      return { kind: "invalid", field: "f14c", message: "F¹⁴C + 2σ must be above zero to give a limiting age." };
    }
    return {
      kind: "limit",
      minAge,
      f14c: n.f14c,
      f14cError: n.f14cError,
      message: fromF
        ? `Reported as a limit: greater than ${fmtYears(minAge)} ¹⁴C yr BP (from F¹⁴C + 2σ), stored as a limit and not calibrated.`
        : `Reported as greater than ${fmtYears(minAge)} ¹⁴C yr BP: stored as a limit and not calibrated.`,
    };
  }
  if (isNearBackground(n.f14c, n.f14cError)) {
    if (!(n.f14c + 2 * n.f14cError > 0)) {
      return {
        kind: "invalid",
        field: "f14c",
        message: "F¹⁴C is below zero by more than twice its error; check the value and its error.",
      };
    }
    const minAge = limitAgeFromF14c(n.f14c, n.f14cError);
    return {
      kind: "limit",
      minAge,
      f14c: n.f14c,
      f14cError: n.f14cError,
      message:
        `F¹⁴C ${n.f14c.toPrecision(3)} ± ${n.f14cError.toPrecision(3)} is within 2σ of zero: ` +
        `reported as greater than ${fmtYears(minAge)} ¹⁴C yr BP (from F¹⁴C + 2σ) and not calibrated.`,
    };
  }
  if (isPostBomb(n.f14c, n.f14cError)) {
    return {
      kind: "postbomb",
      f14c: n.f14c,
      f14cError: n.f14cError,
      age: n.age,
      message:
        `F¹⁴C ${n.f14c.toFixed(4)} ± ${n.f14cError.toFixed(4)} is above 1 by more than 2σ (age ${fmtYears(n.age)} BP): a post-bomb sample, ` +
        `which the bundled curves (ending at AD 1950) cannot calibrate.`,
    };
  }
  if (!Number.isFinite(n.age) || !Number.isFinite(n.ageError)) {
    return { kind: "invalid", field: "f14c", message: "F¹⁴C must be greater than zero to give an age." };
  }
  if (!(n.ageError > 0)) {
    return { kind: "invalid", field: "error", message: "The error must be greater than zero to calibrate." };
  }
  return {
    kind: "age",
    age: n.age,
    error: n.ageError,
    f14c: n.f14c,
    f14cError: n.f14cError,
    normalisedHere: n.normalisedHere,
    correctionYears: n.correctionYears,
    message: n.normalisedHere
      ? `Normalised to δ13C = −25 ‰ (${n.correctionYears >= 0 ? "+" : ""}${n.correctionYears.toFixed(1)} yr${input.normalisedToZeroPermil ? ", from the 0 ‰ reference" : ""}).`
      : "Conventional age, used as reported.",
  };
}

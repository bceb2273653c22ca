import { scaleLinear } from "d3-scale";
import { GRADE_FILL } from "#app/utils/labels.ts";

// Colours for the map, on the single ice hue: pale = young, deep = old; deep = secure for grades.

export const AGE_STOPS = ["#dcebf4", "#5b9cc2", "#0f273b"] as const;
export const UNGRADED_FILL = "#ffffff";

/** A sequential scale from the youngest to the oldest age, pale to deep ice blue. */
export function ageColourScale(minAge: number, maxAge: number) {
  const lo = Math.min(minAge, maxAge);
  const hi = Math.max(minAge, maxAge, lo + 1);
  return scaleLinear<string>()
    .domain([lo, (lo + hi) / 2, hi])
    .range([...AGE_STOPS])
    .clamp(true);
}

export function gradeColour(grade: number | null | undefined): string {
  return grade == null ? UNGRADED_FILL : (GRADE_FILL[grade] ?? UNGRADED_FILL);
}

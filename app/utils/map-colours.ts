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

/*
 * Map marks: each meaning has its own mark, so none doubles for another.
 *  - a filled disc on the ice hue: the site's age (pale = young, deep = old) or its grade
 *    (deep = 3 secure … palest = 0 rejected, with a heavier ink ring so "rejected" is a value);
 *  - a dashed grey ring: no value to colour by (no deglaciation age, or not graded yet);
 *  - a small grey dot: dated, but still under ice at the time on the slider.
 */
export type MarkKind = "value" | "no-value" | "under-ice";
export type MarkStyle = {
  radius: number;
  color: string;
  weight: number;
  fillColor: string;
  fillOpacity: number;
  opacity: number;
  dashArray?: string;
};

export const NO_VALUE_MARK: MarkStyle = {
  radius: 4,
  color: "#5b6975",
  weight: 1.2,
  dashArray: "2 2",
  fillColor: "#ffffff",
  fillOpacity: 0,
  opacity: 1,
};
export const UNDER_ICE_MARK: MarkStyle = {
  radius: 2.2,
  color: "#5b6975",
  weight: 0,
  fillColor: "#5b6975",
  fillOpacity: 0.55,
  opacity: 0,
};

export function valueMark(fillColor: string, rejected = false): MarkStyle {
  return {
    radius: 4.5,
    color: "#0f273b",
    weight: rejected ? 1.6 : 0.7,
    fillColor,
    fillOpacity: 0.95,
    opacity: 1,
  };
}

/** Which mark a site gets, and its style, for a colouring and a slider time (null = the present). */
export function siteMark(
  site: { med: number | null; grade: number | null },
  colourBy: "age" | "grade",
  time: number | null,
  ageColour: (age: number) => string,
): { kind: MarkKind; style: MarkStyle } {
  const underIce = time != null && site.med != null && site.med < time;
  if (underIce) return { kind: "under-ice", style: UNDER_ICE_MARK };
  if (colourBy === "age") {
    if (site.med == null) return { kind: "no-value", style: NO_VALUE_MARK };
    return { kind: "value", style: valueMark(ageColour(site.med)) };
  }
  if (site.grade == null) return { kind: "no-value", style: NO_VALUE_MARK };
  return { kind: "value", style: valueMark(gradeColour(site.grade), site.grade === 0) };
}

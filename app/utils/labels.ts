// Words shown for stored codes (grades, constraint kinds, statuses, flags, checks). Client-safe.

export const GRADE_WORDS: Record<number, string> = { 3: "secure", 2: "usable", 1: "doubtful", 0: "rejected" };

export function gradeWord(grade: number | null | undefined): string {
  return grade == null ? "ungraded" : (GRADE_WORDS[grade] ?? String(grade));
}

export const CONSTRAINT_KIND_LABELS: Record<string, string> = {
  minimum: "minimum-limiting",
  maximum: "maximum-limiting",
  direct: "direct",
};

export const STATUS_LABELS: Record<string, string> = {
  submitted: "submitted",
  in_review: "in review",
  awaiting_answer: "awaiting the contributor’s answer",
  graded: "graded",
  withdrawn: "withdrawn",
};

export const METHOD_LABELS: Record<string, string> = {
  radiocarbon: "radiocarbon",
  luminescence: "luminescence",
  exposure: "exposure",
};

export const FLAG_LABELS: Record<string, string> = {
  young_carbon: "young-carbon contamination",
  old_carbon: "old-carbon or hard-water effect",
  reworked: "reworked material",
  bulk_sediment: "bulk sediment date",
  reservoir_uncertain: "reservoir offset uncertain",
  partial_bleaching: "partial bleaching",
  near_saturation: "signal near saturation",
  dose_rate_uncertain: "dose rate uncertain (water history)",
  weak_stratigraphy: "weak stratigraphic control",
  location_uncertain: "location uncertain",
};

export const CHECK_LABELS: Record<string, string> = {
  value_range: "Value range",
  marine: "Marine caveats",
  replicates: "Replicate consistency",
  stratigraphy: "Stratigraphic order",
  neighbours: "Neighbour conflicts",
  reconstruction: "Reconstruction conflicts",
  duplicates: "Duplicates",
};

/** Ice-scale fill for a grade: deep = secure, pale = rejected (a single hue, never a traffic light). */
export const GRADE_FILL: Record<number, string> = {
  3: "#173a56",
  2: "#3a7fab",
  1: "#8bbad6",
  0: "#dcebf4",
};

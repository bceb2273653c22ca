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
  marine: "Curve and marine reservoir",
  replicates: "Replicate consistency",
  stratigraphy: "Stratigraphic order",
  neighbours: "Neighbour conflicts",
  reconstruction: "Reconstruction conflicts",
  duplicates: "Duplicates",
};

/** Check severities, least to most serious. */
export const CHECK_SEVERITY_LABELS: Record<string, string> = {
  pass: "passed",
  note: "a note",
  warning: "a warning",
  conflict: "a conflict",
};

/** Ice-scale fill for a grade: deep = secure, pale = rejected (a single hue, never a traffic light). */
export const GRADE_FILL: Record<number, string> = {
  3: "#173a56",
  2: "#3a7fab",
  1: "#8bbad6",
  0: "#dcebf4",
};

// ---------------------------------------------------------------- more stored codes

/** Curve short names as stored on a determination ("intcal20") and the words people read. */
export const CURVE_LABELS: Record<string, string> = {
  intcal20: "IntCal20 (2020)",
  marine20: "Marine20 (2020)",
};

/** A stored curve short name in words; an editor's own curve keeps its name. */
export function curveWords(name: string | null | undefined): string {
  if (name == null || name === "") return "IntCal20 (2020)";
  return CURVE_LABELS[name.toLowerCase()] ?? name;
}

/**
 * A calibration's stored label in words. Radiocarbon labels already read "IntCal20 (2020)";
 * a luminescence age has no curve, its calendar density is a normal distribution.
 */
export function calendarModelWords(label: string | null | undefined): string {
  if (label == null || label === "") return "—";
  if (label === "luminescence (normal)") return "Luminescence age as a normal distribution (no curve)";
  return CURVE_LABELS[label.toLowerCase()] ?? label;
}

/** Dose-rate conversion factor sets, named by their publication. */
export const CONVERSION_FACTOR_LABELS: Record<string, string> = {
  guerin2011: "Guérin, Mercier & Adamiec (2011)",
  adamiec1998: "Adamiec & Aitken (1998)",
};

export function conversionFactorWords(key: string | null | undefined): string {
  if (key == null || key === "") return "—";
  return CONVERSION_FACTOR_LABELS[key] ?? key;
}

export const SIGNAL_LABELS: Record<string, string> = {
  OSL: "OSL (optically stimulated)",
  IRSL: "IRSL (infrared stimulated)",
  TL: "TL (thermoluminescence)",
  pIRIR: "post-IR IRSL",
};

/** A signal's short name as the trade writes it ("OSL", "post-IR IRSL"), without its explanation. */
export function signalShortWords(signal: string): string {
  return (SIGNAL_LABELS[signal] ?? signal).replace(/ \(.*\)$/, "");
}

/** A determination's method in words, with its signal for luminescence: "luminescence (OSL)". */
export function methodWords(method: string, signal?: string | null): string {
  const words = METHOD_LABELS[method] ?? method;
  return signal ? `${words} (${signalShortWords(signal)})` : words;
}

/** Audit actions as the verb of a sentence: "<verb> by <person>". */
export const AUDIT_ACTION_VERBS: Record<string, string> = {
  "determination.create": "Submitted",
  "determination.update": "Edited",
  "determination.withdraw": "Withdrawn",
  "determination.delete": "Deleted",
  "determination.grade": "Graded",
  "determination.dose_rate_recompute": "Dose rate computed again with the full model",
  "calibration.recalibrate": "Recalibrated",
  "sample.delete": "Sample removed",
  "lab.create": "Lab registered",
  "lab.register": "Lab registered from an upload (unconfirmed)",
  "lab.confirm": "Lab confirmed",
  "lab.merge": "Lab merged into another",
  "curve.import": "Curve imported",
  "curve.activate": "Curve made current",
  "upload.commit": "Upload committed",
  "upload.undo": "Upload undone",
  "user.invite": "Invited",
  "user.roles": "Roles changed",
  "user.deactivate": "Deactivated",
  "user.reactivate": "Reactivated",
  "auth.sign_in": "Signed in",
  "session.revoke": "Session ended",
  "session.revoke_others": "Other sessions ended",
  "token.create": "API token created",
  "token.revoke": "API token revoked",
  "review.create": "Reviewed",
  "review.question": "Question asked",
  "review.answer": "Question answered",
  "release.publish": "Release published",
};

/** "determination.some_new_thing" → "Some new thing", so an unlisted action still reads as words. */
export function auditActionVerb(action: string): string {
  const known = AUDIT_ACTION_VERBS[action];
  if (known) return known;
  const tail = action.split(".").pop() ?? action;
  const words = tail.replace(/_/g, " ");
  return words.charAt(0).toUpperCase() + words.slice(1);
}

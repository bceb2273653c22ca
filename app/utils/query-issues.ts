// One way to say what is wrong with a query parameter: its name, what it takes and what came,
// in place of the schema library's own text ("Invalid input: expected number, received NaN").
// Every API route that reads query parameters through a schema reports its issues through here.
import type { z } from "zod";

type Issue = z.core.$ZodIssue;

const GENERATED = /^(Invalid|Too (small|big)|Expected|Unrecognized)/;

const fmt = (n: number | bigint) => (typeof n === "bigint" ? n.toString() : n.toLocaleString("en"));

/** What a value of the issue's kind should be, from the issue alone. */
function takes(issue: Issue): string {
  switch (issue.code) {
    case "invalid_type":
      if (issue.expected === "number") return "a number";
      if (issue.expected === "int") return "a whole number";
      if (issue.expected === "array" || issue.expected === "tuple") return "a comma-separated list";
      if (issue.expected === "string") return "text";
      return `a value of type ${issue.expected}`;
    case "invalid_value":
      return `one of ${issue.values.map(String).join(", ")}`;
    case "too_small": {
      const unit = issue.origin === "string" ? " characters" : issue.origin === "array" ? " values" : "";
      const lead = issue.origin === "number" || issue.origin === "int" ? "a number of at least" : "at least";
      return `${lead} ${fmt(issue.minimum)}${unit}`;
    }
    case "too_big": {
      const unit = issue.origin === "string" ? " characters" : issue.origin === "array" ? " values" : "";
      const lead = issue.origin === "number" || issue.origin === "int" ? "a number of at most" : "at most";
      return `${lead} ${fmt(issue.maximum)}${unit}`;
    }
    default:
      return issue.message;
  }
}

/** The value a person sent for a parameter, shortened, for "(got …)". */
function got(raw: Record<string, unknown>, name: string): string {
  const v = raw[name];
  if (v === undefined) return "";
  const s = String(v);
  return ` (got "${s.length > 20 ? `${s.slice(0, 20)}…` : s}")`;
}

/**
 * "name: what it takes (got "value")" for one issue. `hints` describe a parameter in the API's own
 * words (e.g. "a number of years cal BP, from −100 to 100,000", after "give") and win over the issue's own;
 * a message written in the schema itself (not the library's default) is kept.
 */
export function queryIssueMessage(
  issue: Issue,
  raw: Record<string, unknown>,
  hints: Readonly<Record<string, string>> = {},
): string {
  const top = String(issue.path[0] ?? "");
  const hint = hints[top];
  // A parameter is always named as a whole ("bbox", never "bbox.3"); an undescribed list's bad value says which.
  const name = top || "query";
  const index = issue.path.length > 1 && typeof issue.path[1] === "number" ? issue.path[1] : undefined;
  const where = !hint && index !== undefined ? `value ${index + 1} — ` : "";
  const what = hint ? `give ${hint}` : GENERATED.test(issue.message) ? `give ${takes(issue)}` : issue.message;
  return `${name}: ${where}${what}${got(raw, top)}`;
}

/** Every issue of a failed parse, once per parameter (the first issue says the most). */
export function queryIssueMessages(
  error: z.ZodError,
  raw: Record<string, unknown>,
  hints: Readonly<Record<string, string>> = {},
): string[] {
  const seen = new Set<string>();
  const out: string[] = [];
  for (const issue of error.issues) {
    const top = String(issue.path[0] ?? "");
    const key = hints[top] ? top : issue.path.map(String).join(".");
    if (seen.has(key)) continue;
    seen.add(key);
    out.push(queryIssueMessage(issue, raw, hints));
  }
  return out;
}

import { describe, expect, it } from "vitest";
import { z } from "zod";
import { parseConstraintFilter } from "#app/utils/constraint-filter.ts";
import { queryIssueMessages } from "#app/utils/query-issues.ts";

const schema = z.object({
  n: z.coerce.number().int().min(1).max(9),
  kind: z.enum(["minimum", "maximum"]).optional(),
  name: z.string().max(3).optional(),
  custom: z.coerce.number({ error: "give a depth in metres" }).optional(),
});

function messages(query: string, hints: Record<string, string> = {}) {
  const raw = Object.fromEntries(new URLSearchParams(query));
  const parsed = schema.safeParse(raw);
  if (parsed.success) throw new Error("expected a failed parse");
  return queryIssueMessages(parsed.error, raw, hints);
}

describe("query parameter messages", () => {
  it("name the parameter, what it takes and what came, in place of the library's text", () => {
    expect(messages("n=abc")).toEqual(['n: give a number (got "abc")']);
    expect(messages("n=2.5")).toEqual(['n: give a whole number (got "2.5")']);
    expect(messages("n=0")).toEqual(['n: give a number of at least 1 (got "0")']);
    expect(messages("n=12000")).toEqual(['n: give a number of at most 9 (got "12000")']);
    expect(messages("n=1&kind=middle")).toEqual(['kind: give one of minimum, maximum (got "middle")']);
    expect(messages("n=1&name=abcdef")).toEqual(['name: give at most 3 characters (got "abcdef")']);
  });

  it("say every problem at once, and prefer a parameter's own description and the schema's own words", () => {
    expect(messages("n=x&kind=y", { n: "a count of grains from 1 to 9" })).toEqual([
      'n: give a count of grains from 1 to 9 (got "x")',
      'kind: give one of minimum, maximum (got "y")',
    ]);
    expect(messages("n=1&custom=deep")).toEqual(['custom: give a depth in metres (got "deep")']);
  });

  it("name a list parameter as a whole and say which of its values is wrong", () => {
    const parsed = parseConstraintFilter(new URLSearchParams("bbox=-70,50,-50,north"));
    expect(parsed.ok).toBe(false);
    expect(parsed.ok ? [] : parsed.errors).toEqual(['bbox: value 4 — give a number (got "-70,50,-50,north")']);
  });

  it("shorten a long value", () => {
    expect(messages(`n=1&name=${"x".repeat(40)}`)[0]).toBe(`name: give at most 3 characters (got "${"x".repeat(20)}…")`);
  });

  it("word the constraint filter's 400s (constraints and releases API) the same way", () => {
    const parsed = parseConstraintFilter(new URLSearchParams("from_cal_bp=abc&min_grade=7&methods=carbon&time_mode=x"));
    expect(parsed.ok).toBe(false);
    const errors = parsed.ok ? [] : parsed.errors;
    expect(errors).toContain('from_cal_bp: give a number of years cal BP, from −100 to 100,000 (got "abc")');
    expect(errors).toContain('min_grade: give a whole grade 0, 1, 2 or 3 (got "7")');
    expect(errors).toContain('methods: give a comma-separated list of radiocarbon, luminescence, exposure (got "carbon")');
    expect(errors).toContain('time_mode: give one of overlap, median (got "x")');
    expect(errors.join(" ")).not.toMatch(/Invalid|expected|received|NaN/);
  });
});

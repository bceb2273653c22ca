// SQL pieces every registry query shares (Explore, the token API, constraint sets and releases):
// one way to write "not withdrawn", a minimum grade, a value list or a window, so the queries
// cannot drift apart. Columns use the registry's aliases: d determinations, s samples, t sites,
// c the current calibration.

/** Determinations that count as part of the registry unless a filter asks for withdrawn ones. */
export const NOT_WITHDRAWN_SQL = "d.status != 'withdrawn'";

/** The joins from a determination to its sample, site and current calibration. */
export const CURRENT_CALIBRATION_JOIN = "calibrations c on c.determination_id = d.id and c.is_current = 1";

/** A window may be typed either way round (older first or younger first): [lower, upper]. */
export function ordered(a: number | undefined, b: number | undefined): [number | undefined, number | undefined] {
  if (a != null && b != null && a > b) return [b, a];
  return [a, b];
}

/** WHERE conditions with their bound parameters, joined by "and". */
export class Conditions {
  readonly parts: string[] = [];
  readonly params: unknown[] = [];

  add(sql: string, ...params: unknown[]): this {
    this.parts.push(sql);
    this.params.push(...params);
    return this;
  }

  /** `column = value`, or `column in (…)` for several. */
  anyOf(column: string, values: readonly unknown[] | undefined): this {
    if (!values || values.length === 0) return this;
    if (values.length === 1) return this.add(`${column} = ?`, values[0]);
    return this.add(`${column} in (${values.map(() => "?").join(",")})`, ...values);
  }

  /** Reviewer's grade at least `grade` (ungraded determinations do not pass). */
  minGrade(grade: number | undefined): this {
    return grade == null ? this : this.add("d.grade >= ?", grade);
  }

  /** `lower ≤ expr ≤ upper`, either bound optional, bounds in either order. */
  window(expr: string, a: number | undefined, b: number | undefined): this {
    const [lo, hi] = ordered(a, b);
    if (lo != null) this.add(`${expr} >= ?`, lo);
    if (hi != null) this.add(`${expr} <= ?`, hi);
    return this;
  }

  get sql(): string {
    return this.parts.join(" and ");
  }

  /** "where …", or "" when there is no condition. */
  get where(): string {
    return this.parts.length ? `where ${this.sql}` : "";
  }
}

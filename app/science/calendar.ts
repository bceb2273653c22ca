// Calendar scales: cal BP (before AD 1950), BC/AD without a year 0, and b2k (before AD 2000).

export type Era = "BC" | "AD";

export interface CalendarYear {
  era: Era;
  /** Positive year number within the era. */
  year: number;
}

/** 1949 cal BP is AD 1 and 1950 cal BP is 1 BC: the historical scale has no year 0. */
export function calBpToCalendar(calBp: number): CalendarYear {
  if (calBp < 1950) return { era: "AD", year: 1950 - calBp };
  return { era: "BC", year: calBp - 1949 };
}

export function calendarToCalBp(year: number, era: Era): number {
  if (!(year > 0)) throw new Error("A BC/AD year must be positive (there is no year 0).");
  return era === "AD" ? 1950 - year : year + 1949;
}

/** Signed year (AD positive, BC negative, no 0) for arithmetic on historical dates. */
export function calBpToSignedYear(calBp: number): number {
  const c = calBpToCalendar(calBp);
  return c.era === "AD" ? c.year : -c.year;
}

export function calBpToB2k(calBp: number): number {
  return calBp + 50;
}

export function b2kToCalBp(b2k: number): number {
  return b2k - 50;
}

/** Comma thousands separator without depending on the runtime's locale data. */
export function groupThousands(n: number): string {
  const sign = n < 0 ? "-" : "";
  return sign + String(Math.abs(n)).replace(/\B(?=(\d{3})+(?!\d))/g, ",");
}

// Four-digit years read better ungrouped (AD 1950, 9051 BC); five-digit ones need the comma.
function group(n: number): string {
  return n >= 10000 ? groupThousands(n) : String(n);
}

/** Display only: rounds to the nearest year, e.g. 12,000 cal BP → "10,051 BC", 1949 → "AD 1". */
export function formatCalendarYear(calBp: number): string {
  const c = calBpToCalendar(Math.round(calBp));
  return c.era === "AD" ? `AD ${group(c.year)}` : `${group(c.year)} BC`;
}

/** Display only: "12,000 cal BP". */
export function formatCalBp(calBp: number): string {
  return `${groupThousands(Math.round(calBp))} cal BP`;
}

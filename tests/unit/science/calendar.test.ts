import { describe, expect, it } from "vitest";
import fc from "fast-check";
import {
  b2kToCalBp,
  calBpToB2k,
  calBpToCalendar,
  calBpToSignedYear,
  calendarToCalBp,
  formatCalBp,
  formatCalendarYear,
  groupThousands,
} from "#app/science/calendar.ts";

describe("cal BP ↔ BC/AD (A6, common practice)", () => {
  it("has no year 0", () => {
    // common practice (CHECK_VALUES A6)
    expect(calBpToCalendar(1949)).toEqual({ era: "AD", year: 1 });
    expect(calBpToCalendar(1950)).toEqual({ era: "BC", year: 1 });
    expect(calBpToCalendar(2000)).toEqual({ era: "BC", year: 51 });
    expect(calBpToCalendar(12000)).toEqual({ era: "BC", year: 10051 });
    expect(calBpToCalendar(0)).toEqual({ era: "AD", year: 1950 });
    expect(calBpToSignedYear(1950)).toBe(-1);
  });

  it("round-trips every integer year", () => {
    fc.assert(
      fc.property(fc.integer({ min: -100, max: 60000 }), (bp) => {
        const c = calBpToCalendar(bp);
        expect(c.year).toBeGreaterThan(0);
        expect(calendarToCalBp(c.year, c.era)).toBe(bp);
      }),
    );
    expect(() => calendarToCalBp(0, "AD")).toThrow(/no year 0/);
  });

  it("converts to b2k", () => {
    // common practice (CHECK_VALUES A6): b2k = BP + 50
    expect(calBpToB2k(12000)).toBe(12050);
    expect(b2kToCalBp(12050)).toBe(12000);
  });

  it("formats for display", () => {
    // common practice (CHECK_VALUES A6)
    expect(formatCalendarYear(12000)).toBe("10,051 BC");
    expect(formatCalendarYear(1949)).toBe("AD 1");
    expect(formatCalendarYear(1950)).toBe("1 BC");
    expect(formatCalendarYear(0)).toBe("AD 1950");
    expect(formatCalendarYear(11999.6)).toBe("10,051 BC");
    expect(formatCalBp(12000)).toBe("12,000 cal BP");
    expect(groupThousands(1234567)).toBe("1,234,567");
    expect(groupThousands(-765)).toBe("-765");
  });
});

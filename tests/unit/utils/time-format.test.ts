import { describe, expect, it } from "vitest";
import { formatDay, formatTimestamp } from "#app/utils/time-format.ts";

describe("timestamps", () => {
  it("reads the moment in UTC, to the minute", () => {
    const t = Date.UTC(2026, 2, 14, 9, 5, 59);
    expect(formatTimestamp(t)).toBe("2026-03-14 09:05 UTC");
    expect(formatTimestamp(new Date(t))).toBe("2026-03-14 09:05 UTC");
    expect(formatTimestamp(new Date(t).toISOString())).toBe("2026-03-14 09:05 UTC");
    expect(formatDay(t)).toBe("2026-03-14");
  });

  it("gives the UTC day near midnight, and null for no time", () => {
    expect(formatTimestamp(Date.UTC(2025, 11, 31, 23, 59))).toBe("2025-12-31 23:59 UTC");
    expect(formatDay(Date.UTC(2026, 0, 1, 0, 0))).toBe("2026-01-01");
    expect(formatTimestamp(null)).toBeNull();
    expect(formatDay(undefined)).toBeNull();
  });
});

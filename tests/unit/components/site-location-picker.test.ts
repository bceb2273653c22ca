import { describe, expect, test } from "vitest";
import { formatCoordinate, parsePosition } from "#app/components/site-location-picker.tsx";

describe("the new-site map's coordinates", () => {
  test("a picked position is written with at most five decimals", () => {
    expect(formatCoordinate(58.712345678)).toBe("58.71235");
    expect(formatCoordinate(-64.351)).toBe("-64.351");
    expect(formatCoordinate(-64.1234449)).toBe("-64.12344");
  });

  test("typed coordinates become a position only when both are numbers on the globe", () => {
    expect(parsePosition("58.7123", " -64.3511 ")).toEqual({ lat: 58.7123, lon: -64.3511 });
    expect(parsePosition("", "-64")).toBeNull();
    expect(parsePosition("58", "")).toBeNull();
    expect(parsePosition("58°N", "-64")).toBeNull();
    expect(parsePosition("91", "-64")).toBeNull();
    expect(parsePosition("58", "-181")).toBeNull();
  });
});

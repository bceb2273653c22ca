import { describe, expect, it } from "vitest";
import { gradeColour, NO_VALUE_MARK, siteMark, UNDER_ICE_MARK } from "#app/utils/map-colours.ts";

const colour = () => "#123456";

describe("map marks: one meaning, one mark", () => {
  it("tells a rejected site from an ungraded one", () => {
    const rejected = siteMark({ med: 9000, grade: 0 }, "grade", null, colour);
    const ungraded = siteMark({ med: 9000, grade: null }, "grade", null, colour);
    expect(rejected.kind).toBe("value");
    expect(rejected.style.fillColor).toBe(gradeColour(0));
    expect(ungraded).toEqual({ kind: "no-value", style: NO_VALUE_MARK });
    expect(rejected.style).not.toEqual(ungraded.style);
  });

  it("gives a site still under ice its own mark, not the no-value ring", () => {
    const underIce = siteMark({ med: 9000, grade: 3 }, "grade", 10000, colour);
    const noAge = siteMark({ med: null, grade: null }, "age", 10000, colour);
    expect(underIce).toEqual({ kind: "under-ice", style: UNDER_ICE_MARK });
    expect(noAge.kind).toBe("no-value");
    expect(UNDER_ICE_MARK).not.toEqual(NO_VALUE_MARK);
  });

  it("colours ice-free sites by age at the slider's time", () => {
    expect(siteMark({ med: 11000, grade: null }, "age", 10000, colour).style.fillColor).toBe("#123456");
  });
});

import { describe, expect, it } from "vitest";
import { describeRows, groupCautions } from "#app/utils/caution-groups.ts";

describe("upload cautions folded per column and kind", () => {
  it("makes one group of the same caution on many rows, in first-seen order", () => {
    const groups = groupCautions([
      { row: 3, column: "delta_r_curve", message: "ΔR given without the curve it was derived against." },
      { row: 2, column: "delta_r", message: "No ΔR given." },
      { row: 2, column: "delta_r_curve", message: "ΔR given without the curve it was derived against." },
      { row: 9, column: "delta_r_curve", message: "ΔR given without the curve it was derived against." },
    ]);
    expect(groups).toEqual([
      { column: "delta_r_curve", message: "ΔR given without the curve it was derived against.", rows: [2, 3, 9] },
      { column: "delta_r", message: "No ΔR given.", rows: [2] },
    ]);
  });

  it("writes runs of rows as ranges", () => {
    expect(describeRows([4])).toBe("row 4");
    expect(describeRows([2, 5])).toBe("rows 2 and 5");
    expect(describeRows([2, 5, 7, 8, 9, 10, 11, 12])).toBe("rows 2, 5 and 7–12");
    expect(describeRows([1, 3, 5, 7], 2)).toBe("rows 1, 3 and 2 more runs");
  });
});

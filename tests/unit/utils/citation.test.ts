import { describe, expect, it } from "vitest";
import { formatCitation, titleKey } from "#app/utils/citation.ts";

describe("formatCitation", () => {
  it("writes authors (year) title. journal., keeping the authors' initials and a title's own question mark", () => {
    expect(
      formatCitation({
        authors: "Frostvik, A., Kettle, B.",
        year: 2019,
        title: "Ice retreat in the north",
        journal: "J. Imag. 41, 12–30",
        doi: null,
      }),
    ).toBe("Frostvik, A., Kettle, B. (2019) Ice retreat in the north. J. Imag. 41, 12–30.");
    expect(
      formatCitation({
        authors: "Kettle, B.,",
        year: 2020,
        title: "Did the ice stall?",
        journal: "J. Imag. 42",
        doi: "10.99999/x",
      }),
    ).toBe("Kettle, B. (2020) Did the ice stall? J. Imag. 42.");
  });

  it("says a publication without a title honestly, never inventing one", () => {
    expect(formatCitation({ authors: null, year: null, title: null, journal: null, doi: "10.99999/x.1" })).toBe(
      "untitled — doi:10.99999/x.1",
    );
    expect(formatCitation({ authors: null, year: null, title: "  ", journal: null, doi: null })).toBe("untitled");
  });
});

describe("titleKey", () => {
  it("treats case, spacing and a closing full stop as the same title, and other words as another", () => {
    expect(titleKey("Ice  retreat in the North.")).toBe(titleKey("ice retreat in the north"));
    expect(titleKey("Ice retreat in the south")).not.toBe(titleKey("Ice retreat in the north"));
  });
});

import { describe, expect, it } from "vitest";
import { auditStory, changeSentence, changeSentences, fieldLabel } from "#app/utils/audit-sentences.ts";
import { auditActionVerb, calendarModelWords, conversionFactorWords, curveWords } from "#app/utils/labels.ts";

describe("audit rows as sentences", () => {
  it("tells a creation as one headline naming the person", () => {
    const story = auditStory("determination.create", "Ada Frostmere", null, { labCode: "KVX-1", c14AgeYr: 9850 });
    expect(story).toEqual({ headline: "Submitted by Ada Frostmere", details: [] });
  });

  it("says the system when no person is recorded", () => {
    expect(auditStory("calibration.recalibrate", null, null, {}).headline).toBe("Recalibrated by the system");
  });

  it("lists each changed field with its unit, leaving bookkeeping out", () => {
    const before = { c14ErrorYr: 40, c14AgeYr: 9850, version: 1, updatedAt: "2026-01-01T00:00:00Z", curveName: "intcal20" };
    const after = { c14ErrorYr: 45, c14AgeYr: 9850, version: 2, updatedAt: "2026-02-01T00:00:00Z", curveName: "marine20" };
    expect(changeSentences(before, after)).toEqual([
      "Error (1σ) changed from 40 to 45 ¹⁴C yr",
      "Curve changed from IntCal20 (2020) to Marine20 (2020)",
    ]);
  });

  it("reads codes in words: constraint kinds, statuses, conversion factors, yes/no", () => {
    expect(changeSentence("constraintKind", "minimum", "maximum")).toBe(
      "Constraint kind changed from minimum-limiting to maximum-limiting",
    );
    expect(changeSentence("status", "submitted", "withdrawn")).toBe("Status changed from submitted to withdrawn");
    expect(changeSentence("conversionFactors", "adamiec1998", "guerin2011")).toBe(
      "Conversion factors changed from Adamiec & Aitken (1998) to Guérin, Mercier & Adamiec (2011)",
    );
    expect(changeSentence("isLimit", false, true)).toBe("Greater-than age changed from no to yes");
  });

  it("says set and cleared for values that appear or go", () => {
    expect(changeSentence("d13cPermil", null, 1.2)).toBe("δ¹³C set to 1.2 ‰");
    expect(changeSentence("notes", "old note", null)).toBe("Notes cleared (was old note)");
  });

  it("reads a sample placement change beside the determination's own fields", () => {
    const before = { labCode: "KVX-1", sample: { siteId: 3, siteName: "Kivalik Delta", depthCm: 120 } };
    const after = { labCode: "KVX-1", sample: { siteId: 4, siteName: "Tarrviq Moraine", depthCm: 120 } };
    expect(changeSentences(before, after)).toEqual(["Site changed from Kivalik Delta to Tarrviq Moraine"]);
  });

  it("tells a grade with its number and word, and its flags", () => {
    const story = auditStory("determination.grade", "Demo Reviewer", { grade: null }, { grade: 1, flags: ["reworked"] });
    expect(story).toEqual({ headline: "Graded 1 doubtful by Demo Reviewer", details: ["Flags: reworked material"] });
  });

  it("rounds numbers for reading, never showing float noise", () => {
    expect(changeSentence("doseRateGyPerKa", 2.06931, 2.1)).toBe("Dose rate changed from 2.069 to 2.1 Gy/ka");
    expect(changeSentence("waterContentFraction", 0.15, 0.2)).toBe(
      "Water content changed from 15 % of dry mass to 20 % of dry mass",
    );
  });

  it("gives unlisted fields and actions readable words instead of codes", () => {
    expect(fieldLabel("someNewField")).toBe("some new field");
    expect(auditActionVerb("determination.split_sample")).toBe("Split sample");
  });
});

describe("the label table", () => {
  it("names curves by their published name and year", () => {
    expect(curveWords("intcal20")).toBe("IntCal20 (2020)");
    expect(curveWords("MARINE20")).toBe("Marine20 (2020)");
    expect(curveWords(null)).toBe("IntCal20 (2020)");
    expect(curveWords("lakecurve7")).toBe("lakecurve7");
  });

  it("names conversion factor sets by their publication", () => {
    expect(conversionFactorWords("guerin2011")).toBe("Guérin, Mercier & Adamiec (2011)");
    expect(conversionFactorWords(null)).toBe("—");
  });

  it("reads a luminescence calendar model in words", () => {
    expect(calendarModelWords("luminescence (normal)")).toBe("Luminescence age as a normal distribution (no curve)");
    expect(calendarModelWords("IntCal20 (2020)")).toBe("IntCal20 (2020)");
  });
});

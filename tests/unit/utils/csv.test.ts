import { describe, expect, test } from "vitest";
import { safeCell, toCsv } from "#app/utils/csv.ts";

describe("safeCell", () => {
  test.each([
    ["=SUM(A1:A2)", "'=SUM(A1:A2)"],
    ["+1", "'+1"],
    ["-1", "'-1"],
    ["@cmd", "'@cmd"],
    ["\tx", "'\tx"],
    ["\rx", "'\rx"],
  ])("prefixes %j with a quote", (input, expected) => {
    expect(safeCell(input)).toBe(expected);
  });

  test("leaves ordinary text and numbers alone; negative numbers stay numbers", () => {
    expect(safeCell("a1")).toBe("a1");
    expect(safeCell("12000 to 11830 (0.683)")).toBe("12000 to 11830 (0.683)");
    expect(safeCell(-45)).toBe("-45");
    expect(safeCell(10250.5)).toBe("10250.5");
    expect(safeCell(null)).toBe("");
    expect(safeCell(undefined)).toBe("");
    expect(safeCell(Number.NaN)).toBe("");
  });
});

describe("toCsv", () => {
  test("quotes commas, quotes and line breaks after making cells safe", () => {
    const csv = toCsv(
      ["id", "note"],
      [
        ["=1+1", 'said "hi", then left'],
        ["b", "two\nlines"],
      ],
    );
    expect(csv).toBe('id,note\r\n\'=1+1,"said ""hi"", then left"\r\nb,"two\nlines"\r\n');
  });
});

import { describe, expect, test } from "vitest";
import { entriesFromPageInput, mergeResults, parseCalibrationInput, type PageInput } from "#app/utils/calibrate-input.ts";

const defaults = { curve: "intcal20" };

describe("parseCalibrationInput", () => {
  test("reads id, age, error and optional curve and ΔR", () => {
    const entries = parseCalibrationInput("a1, 10250, 45\nm1, 9500, 70, Marine20, 50, 40", defaults);
    expect(entries).toEqual([
      { line: 1, id: "a1", item: { id: "a1", c14_age: 10250, c14_error: 45, curve: "intcal20" } },
      { line: 2, id: "m1", item: { id: "m1", c14_age: 9500, c14_error: 70, curve: "marine20", delta_r: 50, delta_r_error: 40 } },
    ]);
  });

  test("reads age ± error, age +/- error and two bare numbers, numbering them", () => {
    const entries = parseCalibrationInput("10250 ± 45\n\n# a comment\n8120+/-35\n5000, 30", defaults);
    expect(entries.map((e) => ("item" in e ? [e.id, e.item.c14_age, e.item.c14_error] : e.error))).toEqual([
      ["1", 10250, 45],
      ["2", 8120, 35],
      ["3", 5000, 30],
    ]);
    expect(entries.map((e) => e.line)).toEqual([1, 4, 5]);
  });

  test("skips a header line and accepts tabs or semicolons", () => {
    const entries = parseCalibrationInput("id\tage\terror\nx\t100\t20\ny;200;30", defaults);
    expect(entries.map((e) => e.id)).toEqual(["x", "y"]);
  });

  test("says which line and value is wrong", () => {
    const entries = parseCalibrationInput("a, ten, 4\nb, 100, ?\nc, 100, 10, marine20, x\n42", defaults);
    expect(entries.map((e) => ("error" in e ? e.error : ""))).toEqual([
      'Line 1: the age "ten" is not a number.',
      'Line 2: the error "?" is not a number.',
      'Line 3: ΔR "x" is not a number.',
      'Line 4: give an age and its error, e.g. "10250 ± 45".',
    ]);
  });

  test("lines without a curve take the default curve and its ΔR; other curves do not", () => {
    const entries = parseCalibrationInput("a, 9500, 70\nb, 9500, 70, intcal20", {
      curve: "marine20",
      deltaR: 50,
      deltaRError: 40,
    });
    expect(entries.map((e) => ("item" in e ? e.item : null))).toEqual([
      { id: "a", c14_age: 9500, c14_error: 70, curve: "marine20", delta_r: 50, delta_r_error: 40 },
      { id: "b", c14_age: 9500, c14_error: 70, curve: "intcal20" },
    ]);
  });
});

describe("entriesFromPageInput", () => {
  const base: PageInput = {
    mode: "one",
    age: "10250",
    error: "45",
    curve: "intcal20",
    deltaR: "50",
    deltaRError: "40",
    list: "",
  };

  test("one age on an atmospheric curve ignores the ΔR fields", () => {
    expect(entriesFromPageInput(base, false)).toEqual([
      { line: 1, id: "1", item: { id: "1", c14_age: 10250, c14_error: 45, curve: "intcal20" } },
    ]);
  });

  test("one age on a marine curve carries ΔR", () => {
    const [e] = entriesFromPageInput({ ...base, curve: "marine20" }, true);
    expect(e).toMatchObject({ item: { curve: "marine20", delta_r: 50, delta_r_error: 40 } });
  });

  test("an empty form gives nothing; a bad number gives a message", () => {
    expect(entriesFromPageInput({ ...base, age: "", error: "" }, false)).toEqual([]);
    expect(entriesFromPageInput({ ...base, age: "abc" }, false)).toEqual([
      { line: 1, id: "1", error: 'The age "abc" is not a number.' },
    ]);
  });

  test("list mode parses the list with the form's curve as default", () => {
    const entries = entriesFromPageInput({ ...base, mode: "list", curve: "marine20", list: "9500 ± 70" }, true);
    expect(entries).toMatchObject([{ item: { curve: "marine20", delta_r: 50, delta_r_error: 40 } }]);
  });
});

describe("mergeResults", () => {
  test("keeps parse errors in place and pairs the rest with the API's results in order", () => {
    const entries = parseCalibrationInput("a, 1, 1\nb, x, 1\nc, 2, 2", defaults);
    const rows = mergeResults(entries, [
      { id: "a", median_cal_bp: 10, hpd68: [], hpd95: [] },
      { id: "c", error: "beyond the curve" },
    ]);
    expect(rows.map((r) => [r.id, r.result?.median_cal_bp ?? null, r.error ?? null])).toEqual([
      ["a", 10, null],
      ["b", null, 'Line 2: the age "x" is not a number.'],
      ["c", null, "beyond the curve"],
    ]);
  });
});

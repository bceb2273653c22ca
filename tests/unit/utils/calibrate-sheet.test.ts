import { describe, expect, test } from "vitest";
import {
  MAX_SHEET_ROWS,
  readCalibrationSheet,
  readOneAge,
  sheetText,
  splitPastedSheet,
  type CurveChoice,
} from "#app/utils/calibrate-sheet.ts";
import { ageToF14c } from "#app/science/radiocarbon.ts";
import { calibrate } from "#app/science/calibration.ts";
import { prepareCurve } from "#app/science/curve.ts";
import { appliedOffset } from "#app/science/reservoir.ts";
import { loadCurve } from "../science/curve-files.ts";

const CURVES: CurveChoice[] = [
  { name: "intcal20", kind: "atmospheric" },
  { name: "marine20", kind: "marine" },
];
const DEFAULTS = { curve: "intcal20" };

function read(text: string, defaults: { curve: string; deltaR?: number; deltaRError?: number } = DEFAULTS) {
  const split = splitPastedSheet(text);
  return readCalibrationSheet(split.rows, { defaults, curves: CURVES, more: split.more });
}

describe("a pasted sheet in the template's columns", () => {
  test("reads a spreadsheet paste (tabs) with its header, in any column order, setting other template columns aside", () => {
    const sheet = read(
      [
        "site_name\tc14_error\tlab_code\tc14_age\tcurve\tdelta_r\tdelta_r_error\tMystery",
        "Cove\t45\tXMPL-1\t10250\t\t\t\tx",
        "Cove\t70\tXMPL-2\t9500\tmarine20\t50\t40\t",
        "",
      ].join("\n"),
    );
    expect(sheet.problems).toEqual([]);
    expect(sheet.headerRow).toBe(1);
    expect(sheet.setAside).toEqual(["site_name"]);
    expect(sheet.unknown).toEqual(["Mystery"]);
    expect(sheet.rows.map((r) => [r.row, r.label, r.item])).toEqual([
      [2, "XMPL-1", { id: "XMPL-1", c14_age: 10250, c14_error: 45, curve: "intcal20" }],
      [3, "XMPL-2", { id: "XMPL-2", c14_age: 9500, c14_error: 70, curve: "marine20", delta_r: 50, delta_r_error: 40 }],
    ]);
  });

  test("recognises the template's labels and common spellings as headers, and commas as separators", () => {
    const sheet = read("Lab No.,14C age (yr BP),Error\nXMPL-7,8120,35");
    expect(sheet.used.map((u) => u.column)).toEqual(["lab_code", "c14_age", "c14_error"]);
    expect(sheet.rows[0]!.item).toMatchObject({ id: "XMPL-7", c14_age: 8120, c14_error: 35 });
  });

  test("without a header row reads lab_code, c14_age, c14_error, curve, ΔR — or the age first when the row starts with a number", () => {
    expect(read("XMPL-1, 10250, 45\nXMPL-2, 9500, 70, marine20, 50, 40").rows.map((r) => r.item)).toEqual([
      { id: "XMPL-1", c14_age: 10250, c14_error: 45, curve: "intcal20" },
      { id: "XMPL-2", c14_age: 9500, c14_error: 70, curve: "marine20", delta_r: 50, delta_r_error: 40 },
    ]);
    const bare = read("10250\t45\n8120\t35");
    expect(bare.headerRow).toBeNull();
    expect(bare.rows.map((r) => [r.label, r.item?.c14_age])).toEqual([
      ["row 1", 10250],
      ["row 2", 8120],
    ]);
  });

  test("reports every problem of every row at its column, and keeps the good rows", () => {
    const sheet = read(
      [
        "lab_code\tc14_age\tc14_error\tcurve\tdelta_r",
        "XMPL-1\t10250\t45",
        "XMPL-2\tx\t-3",
        "XMPL-3\t12400\t60\tintcal21",
        "XMPL-4\t9000\t40\t\t120",
        "XMPL-5\t10,250\t",
      ].join("\n"),
    );
    const byRow = Object.fromEntries(sheet.rows.map((r) => [r.row, r.problems]));
    expect(sheet.rows[0]!.item).toBeDefined();
    expect(byRow[3]).toEqual([
      { column: "c14_age", message: '"x" is not a number; c14_age takes a number in ¹⁴C yr BP.' },
      { column: "c14_error", message: "c14_error must be more than 0." },
    ]);
    expect(byRow[4]).toEqual([
      { column: "curve", message: expect.stringMatching(/"intcal21" is not a curve.*did you mean intcal20/) },
    ]);
    expect(byRow[5]).toEqual([{ column: "delta_r", message: expect.stringMatching(/ΔR applies to marine curves only/) }]);
    expect(byRow[6]!.map((p) => p.column)).toEqual(["c14_age", "c14_error"]);
    expect(byRow[6]![0]!.message).toMatch(/use a point as the decimal separator/);
    for (const row of sheet.rows.slice(1)) expect(row.item).toBeUndefined();
  });

  test("rows on the page's marine curve take the page's ΔR; rows with their own ΔR or another curve do not", () => {
    const sheet = read(
      [
        "lab_code\tc14_age\tc14_error\tcurve\tdelta_r\tdelta_r_error",
        "A\t9500\t70",
        "B\t9500\t70\t\t10\t5",
        "C\t9500\t70\tintcal20",
      ].join("\n"),
      { curve: "marine20", deltaR: 150, deltaRError: 60 },
    );
    expect(sheet.rows.map((r) => r.item)).toEqual([
      { id: "A", c14_age: 9500, c14_error: 70, curve: "marine20", delta_r: 150, delta_r_error: 60 },
      { id: "B", c14_age: 9500, c14_error: 70, curve: "marine20", delta_r: 10, delta_r_error: 5 },
      { id: "C", c14_age: 9500, c14_error: 70, curve: "intcal20" },
    ]);
  });

  test("a freshwater offset on an atmospheric curve is taken off the age with the errors in quadrature, and said so", () => {
    const sheet = read(
      [
        "lab_code,c14_age,c14_error,curve,freshwater_offset,freshwater_offset_error",
        "XMPL-31,9400,40,intcal20,350,30",
        "XMPL-32,9400,40,intcal20,350,",
        "XMPL-33,9400,40,intcal20,,",
      ].join("\n"),
    );
    expect(sheet.setAside).toEqual([]);
    expect(sheet.rows.map((r) => r.item)).toEqual([
      { id: "XMPL-31", c14_age: 9050, c14_error: 50, curve: "intcal20" }, // √(40² + 30²) = 50
      { id: "XMPL-32", c14_age: 9050, c14_error: 40, curve: "intcal20" },
      { id: "XMPL-33", c14_age: 9400, c14_error: 40, curve: "intcal20" },
    ]);
    expect(sheet.rows[0]!.note).toBe("Freshwater offset 350 ± 30 ¹⁴C yr taken off: calibrated as 9,050 ± 50 ¹⁴C yr BP.");
    expect(sheet.rows[2]!.note).toBeUndefined();

    // Independent of the sheet: the registry adds the offset to the curve (science/reservoir.ts); the
    // sheet's shifted age on the plain curve must give the same calendar ages.
    const intcal = prepareCurve(loadCurve("intcal20"));
    const offset = appliedOffset("atmospheric", { freshwaterOffset: 350, freshwaterOffsetError: 30 });
    const onCurve = calibrate(intcal, { age: 9400, error: 40, deltaR: offset.deltaR, deltaRError: offset.deltaRError });
    const shifted = calibrate(intcal, { age: 9050, error: 50 });
    expect(shifted.medianCalBp).toBeCloseTo(onCurve.medianCalBp, 6);
    expect(shifted.medianCalBp).toBeGreaterThan(9_000);
    expect(shifted.hpd95).toEqual(onCurve.hpd95);
  });

  test("a freshwater offset on a marine row, or an offset error without its offset, is named at its cell", () => {
    const sheet = read(
      [
        "lab_code,c14_age,c14_error,curve,delta_r,delta_r_error,freshwater_offset,freshwater_offset_error",
        "XMPL-41,9400,40,marine20,50,20,300,20",
        "XMPL-42,9400,40,intcal20,,,,25",
        "XMPL-43,9400,40,intcal20,,,200,-5",
      ].join("\n"),
    );
    expect(sheet.rows.map((r) => r.problems.map((p) => p.column))).toEqual([
      ["freshwater_offset"],
      ["freshwater_offset"],
      ["freshwater_offset_error"],
    ]);
    expect(sheet.rows[0]!.problems[0]!.message).toContain("atmospheric curves only");
  });

  test("ΔR derived against another curve than the row's is used as given, and the row says so", () => {
    const sheet = read(
      [
        "lab_code,c14_age,c14_error,curve,delta_r,delta_r_error,delta_r_curve",
        "XMPL-51,9400,40,marine20,50,20,marine13",
        "XMPL-52,9400,40,marine20,50,20,Marine20",
      ].join("\n"),
    );
    expect(sheet.rows[0]!.item).toMatchObject({ delta_r: 50, delta_r_error: 20 });
    expect(sheet.rows[0]!.note).toContain("ΔR was derived against marine13, not marine20");
    expect(sheet.rows[1]!.note).toBeUndefined();
  });

  test("measurements are made conventional as the registry does: F¹⁴C to age, δ¹³C normalisation; limits and luminescence are not calibrated", () => {
    const f = ageToF14c(10250);
    const sheet = read(
      [
        "lab_code\tmethod\tc14_age\tc14_error\tf14c\tf14c_error\td13c\tage_normalised\tgreater_than",
        `F\tradiocarbon\t\t\t${f}\t0.001`,
        "N\tradiocarbon\t10000\t40\t\t\t-20\tno",
        "G\tradiocarbon\t45000\t500\t\t\t\t\tyes",
        "L\tluminescence",
      ].join("\n"),
    );
    const [fromF, normalised, limit, lum] = sheet.rows;
    // F14C = exp(−age/8033) (Stuiver & Polach 1977), so the age comes back to 10,250 to rounding.
    expect(fromF!.item!.c14_age).toBeCloseTo(10250, 6);
    expect(fromF!.note).toMatch(/From F¹⁴C/);
    // δ13C −20 ‰ → the age is made older by 8033·ln((1−20/1000)/(1−25/1000))² ≈ 82 yr (common practice, exact form).
    expect(normalised!.item!.c14_age).toBeGreaterThan(10080);
    expect(normalised!.item!.c14_age).toBeLessThan(10084);
    expect(normalised!.note).toMatch(/Normalised to δ¹³C −25 ‰/);
    expect(limit!.item).toBeUndefined();
    expect(limit!.problems[0]!.column).toBe("greater_than");
    expect(lum!.problems).toEqual([{ column: "method", message: expect.stringMatching(/radiocarbon ages only/) }]);
  });

  test("an error beyond the 5,000 ¹⁴C yr the calibration takes is named at its cell", () => {
    const sheet = read(
      "lab_code\tc14_age\tc14_error\tcurve\tdelta_r\tdelta_r_error\nA\t30000\t6000\nB\t9000\t50\tmarine20\t0\t5001",
    );
    expect(sheet.rows.map((r) => r.problems)).toEqual([
      [
        {
          column: "c14_error",
          message: "c14_error 6,000 is more than the 5,000 ¹⁴C yr taken here; an age this uncertain spans the whole curve.",
        },
      ],
      [{ column: "delta_r_error", message: expect.stringMatching(/^delta_r_error 5,001 is more than/) }],
    ]);
  });

  test("a header without an age column, and a sheet longer than the limit, are refused as a whole", () => {
    expect(read("lab_code\tsite_name\nA\tB").problems[0]).toMatch(/names no c14_age/);
    const long = ["lab_code\tc14_age\tc14_error", ...Array.from({ length: MAX_SHEET_ROWS + 1 }, (_, i) => `A${i}\t1000\t30`)];
    const sheet = read(long.join("\n"));
    expect(sheet.problems[0]).toMatch(/more than 5,000 rows/);
    expect(sheet.rows).toEqual([]);
  });

  test("cells from a workbook: numbers as numbers, dates and formulas named", () => {
    const sheet = readCalibrationSheet(
      [
        { n: 1, cells: ["lab_code", "c14_age", "c14_error"] },
        { n: 3, cells: ["A", 10250, 45] },
        { n: 4, cells: ["B", { date: "2021-03-04T00:00:00.000Z" }, { formula: true }] },
      ],
      { defaults: DEFAULTS, curves: CURVES },
    );
    expect(sheet.rows[0]).toMatchObject({ row: 3, item: { c14_age: 10250 } });
    expect(sheet.rows[1]!.problems.map((p) => p.column)).toEqual(["c14_age", "c14_error"]);
    expect(sheet.rows[1]!.problems[0]!.message).toMatch(/date/);
    expect(sheet.rows[1]!.problems[1]!.message).toMatch(/formula/);
  });

  test("a read file written as the paste box's text reads back the same", () => {
    const rows = [
      { n: 1, cells: ["lab_code", "c14_age", "c14_error"] },
      { n: 2, cells: ['XM"PL, 1', 10250, 45] },
    ];
    const again = read(sheetText(rows));
    expect(again.rows[0]!.item).toEqual({ id: 'XM"PL, 1', c14_age: 10250, c14_error: 45, curve: "intcal20" });
  });
});

describe("the one age typed in the form", () => {
  const base = { age: "10250", error: "45", curve: "intcal20", deltaR: "", deltaRError: "" };
  test("gives an item, with ΔR only on a marine curve", () => {
    expect(readOneAge(base, CURVES)).toEqual({
      item: { id: "1", c14_age: 10250, c14_error: 45, curve: "intcal20" },
      problems: [],
    });
    expect(readOneAge({ ...base, deltaR: "50" }, CURVES).item?.delta_r).toBeUndefined();
    expect(readOneAge({ ...base, curve: "marine20", deltaR: "50", deltaRError: "40" }, CURVES).item).toMatchObject({
      delta_r: 50,
      delta_r_error: 40,
    });
  });

  test("says what is wrong at each field in the form's words; nothing typed is no problem", () => {
    expect(readOneAge({ ...base, age: "", error: "" }, CURVES)).toEqual({ problems: [] });
    const bad = readOneAge({ ...base, age: "ten", error: "0", curve: "marine20", deltaRError: "-4" }, CURVES);
    expect(bad.item).toBeUndefined();
    expect(bad.problems).toEqual([
      { field: "age", message: '"ten" is not a number; ¹⁴C age takes a number in ¹⁴C yr BP.' },
      { field: "error", message: "The error must be more than 0." },
      { field: "delta_r_error", message: "The ΔR error must be 0 or more." },
    ]);
  });
});

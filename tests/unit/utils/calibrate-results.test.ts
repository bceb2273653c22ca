import Papa from "papaparse";
import { describe, expect, test } from "vitest";
import { joinResults, resultsCsv, sparkFromDensity, type ResultRow } from "#app/utils/calibrate-results.ts";
import type { SheetRow } from "#app/utils/calibrate-sheet.ts";

describe("sparkline densities", () => {
  test("bins a density older-first over the window that holds it, scaled to a peak of 1", () => {
    // A box density over 100 years (youngest 11,900) with a zero tail of 400 years on each side.
    const values = [...new Array(400).fill(0), ...new Array(100).fill(0.01), ...new Array(400).fill(0)];
    const spark = sparkFromDensity(11500, values, 10);
    expect(spark.younger).toBe(11900);
    expect(spark.older).toBe(11999);
    expect(spark.values).toEqual(new Array(10).fill(1));
  });

  test("keeps the shape: a density rising towards the young end is drawn rising to the right", () => {
    const values = Array.from({ length: 200 }, (_, i) => 200 - i); // largest at start_cal_bp, the young end
    const spark = sparkFromDensity(5000, values, 4);
    expect(spark.values[3]).toBe(1);
    for (let i = 1; i < 4; i++) expect(spark.values[i]!).toBeGreaterThan(spark.values[i - 1]!);
    expect(spark.older - spark.younger).toBeLessThanOrEqual(199);
  });

  test("an empty density gives an empty sparkline", () => {
    expect(sparkFromDensity(100, []).values).toEqual([]);
    expect(sparkFromDensity(100, [0, 0, 0]).values).toEqual([]);
  });
});

const good: SheetRow = {
  row: 2,
  label: "XMPL-1",
  item: { id: "XMPL-1", c14_age: 10250, c14_error: 45, curve: "intcal20" },
  problems: [],
};
const bad: SheetRow = { row: 3, label: '=HYPERLINK("x")', problems: [{ column: "c14_age", message: '"x" is not a number.' }] };
const beyond: SheetRow = {
  row: 4,
  label: "XMPL-3",
  item: { id: "XMPL-3", c14_age: 60000, c14_error: 45, curve: "intcal20" },
  problems: [],
};

describe("results joined to the sheet and written as CSV", () => {
  const summary = {
    median_cal_bp: 11943,
    hpd68: [{ from: 12000, to: 11830, p: 0.683 }],
    hpd95: [
      { from: 12103, to: 11810, p: 0.872 },
      { from: 11786, to: 11756, p: 0.018 },
    ],
    spark: { older: 12460, younger: 11654, values: [0.5, 1] },
  };
  const rows: ResultRow[] = joinResults(
    [good, bad, beyond],
    [
      { id: "XMPL-1", ...summary },
      { id: "XMPL-3", error: "The age is beyond the curve." },
    ],
  );

  test("results go to the rows that were sent, in order; rows with problems keep them", () => {
    expect(rows[0]!.result?.median_cal_bp).toBe(11943);
    expect(rows[1]!.result).toBeUndefined();
    expect(rows[2]!.error).toBe("The age is beyond the curve.");
  });

  test("one line per row with the median and ranges, problems in words, and text that could be a formula neutralised", () => {
    const csv = resultsCsv(rows, { intcal20: { version: "2020", citation: "IntCal20 citation" } }, "bp");
    const lines = csv.split("\r\n");
    expect(lines[0]).toMatch(/^"# Thawline calibration results/);
    expect(lines[1]).toBe('"# intcal20 2020: IntCal20 citation"');
    const parsed = Papa.parse<string[]>(lines.slice(2).join("\n"), { skipEmptyLines: true }).data;
    const header = parsed[0]!;
    expect(header).toEqual([
      "row",
      "lab_code",
      "c14_age",
      "c14_error",
      "curve",
      "curve_version",
      "delta_r",
      "delta_r_error",
      "median_cal_bp",
      "hpd68_cal_bp",
      "hpd95_cal_bp",
      "problems",
    ]);
    const at = (line: string[], name: string) => line[header.indexOf(name)];
    expect(at(parsed[1]!, "median_cal_bp")).toBe("11943");
    expect(at(parsed[1]!, "hpd95_cal_bp")).toBe("12103 to 11810 (87.2 %); 11786 to 11756 (1.8 %)");
    expect(at(parsed[2]!, "lab_code")).toBe('\'=HYPERLINK("x")');
    expect(at(parsed[2]!, "problems")).toBe('c14_age: "x" is not a number.');
    expect(at(parsed[3]!, "problems")).toBe("The age is beyond the curve.");
  });

  test("BC/AD adds the calendar median and writes the ranges as years", () => {
    const csv = resultsCsv(rows.slice(0, 1), {}, "bcad");
    const parsed = Papa.parse<string[]>(csv.split("\r\n").slice(1).join("\n"), { skipEmptyLines: true }).data;
    const header = parsed[0]!;
    // 11,943 cal BP is 9994 BC (1950 − 11,943 = −9,993, and there is no year 0).
    expect(parsed[1]![header.indexOf("median_bc_ad")]).toBe("9994 BC");
    expect(parsed[1]![header.indexOf("hpd68_bc_ad")]).toBe("10,051 BC to 9881 BC (68.3 %)");
  });
});

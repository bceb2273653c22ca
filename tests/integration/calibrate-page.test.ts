import Papa from "papaparse";
import { describe, expect, test } from "vitest";
import type { PageAnswer } from "#app/models/calibration/calibrate-page.server.ts";
import { action as pageAction, loader as pageLoader } from "#app/routes/calibrate.tsx";
import { action as batchAction } from "#app/routes/resources/calibrate-batch.ts";
import { action as csvAction } from "#app/routes/resources/calibrate-csv.ts";
import { action as fileAction } from "#app/routes/resources/calibrate-file.ts";
import { getDb } from "#app/db/client.server.ts";
import { calibrateForPage } from "#app/models/calibration/calibrate-page.server.ts";
import { CALIBRATE_WORK_BUDGET } from "#app/utils/calibrate-limits.ts";
import { spend } from "#app/utils/rate-limit.server.ts";
import { args, run } from "#tests/support/auth.ts";
import { toCsvText, toXlsx, uploadRows } from "#tests/support/upload-files.ts";
import { emptyRowsXlsx } from "#tests/support/xlsx-bombs.ts";

// Each request comes from its own address so the per-address limits never couple tests.
let address = 0;
const from = () => ({ "X-Thawline-Client": `10.9.0.${++address}` });

function form(path: string, fields: Record<string, string>, file?: { name: string; bytes: Buffer | string; type: string }) {
  const body = new FormData();
  for (const [k, v] of Object.entries(fields)) body.append(k, v);
  // A browser sends an empty file part for a file field left empty.
  body.append(
    "file",
    file
      ? new Blob([typeof file.bytes === "string" ? file.bytes : new Uint8Array(file.bytes)], { type: file.type })
      : new Blob([]),
    file?.name ?? "",
  );
  return new Request(`http://localhost${path}`, { method: "POST", body, headers: from() });
}

async function page(fields: Record<string, string>, file?: Parameters<typeof form>[2]) {
  const outcome = await run(() => pageAction(args(form("/calibrate", fields, file))));
  return { status: outcome.status, ...(outcome.data as { answer: PageAnswer; message: string | null }) };
}

const ONE = { mode: "one", age: "10250", error: "45", curve: "intcal20", scale: "bp" };

describe("the calibration page without script", () => {
  test("the page lists the active curves", async () => {
    const { data } = await run(() => pageLoader(args(new Request("http://localhost/calibrate"))));
    expect((data as { curves: { name: string }[] }).curves.map((c) => c.name)).toEqual(["intcal20", "marine20"]);
  });

  test("one age: the summary, and a plot whose legend carries exactly the table's median and ranges", async () => {
    const { status, answer } = await page(ONE);
    expect(status).toBe(200);
    const row = answer.rows[0]!;
    // 10,250 ± 45 on IntCal20 has its median near 11,940 cal BP (the API test's worked example).
    expect(row.result!.median_cal_bp).toBeGreaterThan(11800);
    expect(row.result!.median_cal_bp).toBeLessThan(12100);
    expect(answer.plot).not.toBeNull();
    expect(answer.plot!.calibration.medianCalBp).toBe(row.result!.median_cal_bp);
    expect(answer.plot!.calibration.hpd68).toEqual(row.result!.hpd68);
    expect(answer.plot!.calibration.hpd95).toEqual(row.result!.hpd95);
    expect(answer.plot!.curve.points.length).toBeGreaterThan(10);
  });

  test("one age: each bad field says what is wrong, and nothing is calibrated", async () => {
    const { answer } = await page({ ...ONE, age: "ten", error: "-5" });
    expect(answer.rows).toEqual([]);
    expect(answer.fieldProblems.map((p) => p.field)).toEqual(["age", "error"]);
  });

  test("a pasted sheet: good rows calibrated with sparklines, every bad row and cell named, the chosen row plotted", async () => {
    const sheet = [
      "lab_code\tc14_age\tc14_error\tcurve\tdelta_r\tdelta_r_error",
      "XMPL-1\t10250\t45",
      "XMPL-2\t9500\t70\tmarine20\t50\t40",
      "XMPL-3\tx\t0",
      "XMPL-4\t8120\t35",
    ].join("\n");
    const { answer } = await page({ ...ONE, mode: "sheet", sheet, plot_row: "3" });
    expect(answer.rows.map((r) => [r.row, r.label, Boolean(r.result)])).toEqual([
      [2, "XMPL-1", true],
      [3, "XMPL-2", true],
      [4, "XMPL-3", false],
      [5, "XMPL-4", true],
    ]);
    expect(answer.rows[2]!.problems.map((p) => p.column)).toEqual(["c14_age", "c14_error"]);
    expect(answer.rows[0]!.result!.spark.values.length).toBeGreaterThan(10);
    expect(Math.max(...answer.rows[0]!.result!.spark.values)).toBe(1);
    expect(answer.plotRow).toBe(3);
    expect(answer.plot!.curve.kind).toBe("marine");
    expect(answer.plot!.measurement.deltaR).toBe(50);
    expect(Object.keys(answer.curves).sort()).toEqual(["intcal20", "marine20"]);
  });

  test("a dropped CSV in the upload template's columns: radiocarbon rows calibrated, luminescence rows told why not", async () => {
    const rows = uploadRows(10);
    const { answer } = await page({ ...ONE, mode: "one" }, { name: "sheet.csv", bytes: toCsvText(rows), type: "text/csv" });
    expect(answer.form.mode).toBe("sheet");
    expect(answer.fileNote).toMatch(/Read sheet\.csv: 10 rows/);
    expect(answer.sheet!.setAside).toContain("site_name");
    const lum = answer.rows.filter((r) => r.problems.some((p) => p.column === "method"));
    const calibrated = answer.rows.filter((r) => r.result);
    expect(lum.length).toBeGreaterThan(0);
    expect(calibrated.length + lum.length).toBe(10);
    expect(calibrated[0]!.label).toMatch(/^ZZQ-/);
    // The file is now the paste box's text, so the next post (a row's Plot button) carries it.
    expect(answer.form.sheet.split("\n")[0]).toMatch(/^site_name\t/);
  });

  test("a dropped workbook reads as the same rows", async () => {
    const rows = uploadRows(6);
    const xlsx = await toXlsx(rows);
    const { answer } = await page(ONE, {
      name: "sheet.xlsx",
      bytes: xlsx,
      type: "application/vnd.openxmlformats-officedocument.spreadsheetml.sheet",
    });
    const csv = await page(ONE, { name: "sheet.csv", bytes: toCsvText(rows), type: "text/csv" });
    expect(answer.rows.map((r) => r.result?.median_cal_bp ?? null)).toEqual(
      csv.answer.rows.map((r) => r.result?.median_cal_bp ?? null),
    );
  });

  test("a file that is not a sheet, and a workbook of a million empty rows, are refused with their reason", async () => {
    const pdf = await page(ONE, { name: "paper.pdf", bytes: Buffer.from("%PDF-1.7\n%…"), type: "application/pdf" });
    expect(pdf.status).toBe(400);
    expect(pdf.answer.problem).toMatch(/paper\.pdf: this file looks like a PDF/);
    const empty = await page(ONE, { name: "empty.xlsx", bytes: emptyRowsXlsx(1_000_000), type: "application/octet-stream" });
    expect(empty.status).toBe(400);
    expect(empty.answer.problem).toMatch(/empty\.xlsx: .*rows/);
    expect(empty.answer.rows).toEqual([]);
  });

  test("more rows than the page calibrates in one post without script are refused, saying how many", async () => {
    const sheet = ["c14_age\tc14_error", ...Array.from({ length: 1001 }, () => "5000\t30")].join("\n");
    const { status, answer } = await page({ ...ONE, mode: "sheet", sheet });
    expect(status).toBe(400);
    expect(answer.problem).toMatch(/at most 1,000 rows.*this sheet has 1,001/);
  });

  test("a long sheet is calibrated off the request thread with the same results", async () => {
    const lines = Array.from({ length: 700 }, (_, i) => `Z-${i}\t${3000 + i * 10}\t40`);
    const { status, answer } = await page({
      ...ONE,
      mode: "sheet",
      sheet: ["lab_code\tc14_age\tc14_error", ...lines].join("\n"),
    });
    expect(status).toBe(200);
    expect(answer.rows.filter((r) => r.result)).toHaveLength(700);
    const here = calibrateForPage(getDb(), [answer.rows[350]!.item!]).results[0] as { median_cal_bp: number; hpd95: unknown };
    expect(answer.rows[350]!.result!.median_cal_bp).toBe(here.median_cal_bp);
    expect(answer.rows[350]!.result!.hpd95).toEqual(here.hpd95);
  });

  test("the CSV download answers the same form with every row, formula-like text neutralised", async () => {
    const sheet = ["lab_code\tc14_age\tc14_error", "=cmd|'/c calc'!A1\t10250\t45", "XMPL-2\tnope\t30"].join("\n");
    const res = (await csvAction(args(form("/calibrate/results.csv", { ...ONE, mode: "sheet", sheet })))) as Response;
    expect(res.status).toBe(200);
    expect(res.headers.get("Content-Disposition")).toBe('attachment; filename="thawline-calibration.csv"');
    const lines = (await res.text()).split("\r\n");
    expect(lines[0]).toMatch(/^"# Thawline calibration results/);
    const parsed = Papa.parse<string[]>(lines.filter((l) => !l.startsWith('"#')).join("\n"), { skipEmptyLines: true }).data;
    const header = parsed[0]!;
    expect(parsed).toHaveLength(3);
    expect(parsed[1]![header.indexOf("lab_code")]).toBe("'=cmd|'/c calc'!A1");
    expect(Number(parsed[1]![header.indexOf("median_cal_bp")])).toBeGreaterThan(11800);
    expect(parsed[2]![header.indexOf("problems")]).toMatch(/"nope" is not a number/);
  });
});

function json(path: string, body: unknown) {
  return new Request(`http://localhost${path}`, {
    method: "POST",
    headers: { "Content-Type": "application/json", ...from() },
    body: typeof body === "string" ? body : JSON.stringify(body),
  });
}

describe("the page's script calibrating a sheet in slices", () => {
  const A1 = { id: "a1", c14_age: 10250, c14_error: 45, curve: "intcal20" };

  test("a slice comes back with summaries and sparklines, bad items with their error in place", async () => {
    const { status, data } = await run(() =>
      batchAction(args(json("/calibrate/batch", { items: [A1, { id: "b", c14_age: 9000, c14_error: -1 }] }))),
    );
    expect(status).toBe(200);
    const body = data as { results: Record<string, unknown>[]; plot: unknown };
    expect(Object.keys(body.results[0]!).sort()).toEqual(["hpd68", "hpd95", "id", "median_cal_bp", "spark"]);
    expect(body.results[1]).toEqual({ id: "b", error: "c14_error must be positive." });
    expect(body.plot).toBeNull();
  });

  test("one item with plot: true brings the large plot, its legend the same numbers", async () => {
    const { data } = await run(() => batchAction(args(json("/calibrate/batch", { items: [A1], plot: true }))));
    const body = data as { results: { median_cal_bp: number; hpd95: unknown }[]; plot: PageAnswer["plot"] };
    expect(body.plot!.calibration.medianCalBp).toBe(body.results[0]!.median_cal_bp);
    expect(body.plot!.calibration.hpd95).toEqual(body.results[0]!.hpd95);
  });

  test("the page's work budget is its own and, once spent, the next slice is a 429 with Retry-After", async () => {
    // A slice of wide ages (about 4,000,000 units), far more than the budget refills in a moment.
    const request = json("/calibrate/batch", { items: new Array(100).fill({ ...A1, c14_error: 4000 }) });
    const address = request.headers.get("X-Thawline-Client")!;
    spend(
      `page.calibrate.work:${address}`,
      CALIBRATE_WORK_BUDGET.capacity,
      CALIBRATE_WORK_BUDGET.capacity,
      CALIBRATE_WORK_BUDGET.refillMs,
    );
    const { status, data, headers } = await run(() => batchAction(args(request)));
    expect(status).toBe(429);
    expect(Number(headers.get("Retry-After"))).toBeGreaterThan(0);
    expect((data as { error: string }).error).toMatch(/Too much calibration from this address/);
  });

  test("too many items, none, or not JSON is a 400", async () => {
    for (const body of [{ items: new Array(101).fill(A1) }, { items: [] }, "{"]) {
      const { status, data } = await run(() => batchAction(args(json("/calibrate/batch", body))));
      expect(status).toBe(400);
      expect((data as { error: string }).error).toBeTruthy();
    }
  });

  test("a dropped file comes back as its numbered rows, the header first", async () => {
    const csv = "lab_code,c14_age,c14_error\r\n\r\nXMPL-1,10250,45\r\n";
    const { status, data } = await run(() =>
      fileAction(args(form("/calibrate/file", {}, { name: "a.csv", bytes: csv, type: "text/csv" }))),
    );
    expect(status).toBe(200);
    expect(data).toEqual({
      name: "a.csv",
      rows: [
        { n: 1, cells: ["lab_code", "c14_age", "c14_error"] },
        { n: 3, cells: ["XMPL-1", "10250", "45"] },
      ],
      notices: [],
    });
    const none = await run(() => fileAction(args(form("/calibrate/file", {}))));
    expect(none.status).toBe(400);
  });
});

// The upload template: the columns with one radiocarbon and one luminescence example row, and a
// second sheet explaining every column. Built from the same catalogue the validation uses.
import ExcelJS from "exceljs";
import { COLUMNS, EXAMPLE_ROWS } from "#app/utils/determination-input/columns.ts";
import { toCsv } from "#app/utils/csv.ts";

const REQUIRED = new Set([
  "site_name",
  "latitude",
  "longitude",
  "sample_code",
  "material",
  "method",
  "lab_code",
  "constraint_kind",
]);

function requirement(name: string): string {
  if (REQUIRED.has(name)) return "always";
  if (["c14_age", "c14_error", "f14c", "f14c_error"].includes(name)) return "radiocarbon: age ± error or F¹⁴C ± error";
  if (["de_gy", "de_error_gy", "measurement_year"].includes(name)) return "luminescence";
  if (["dose_rate_gy_per_ka", "dose_rate_error_gy_per_ka"].includes(name))
    return "luminescence: the lab's dose rate ± error, or K, U, Th, water content and burial depth";
  if (["k_percent", "u_ppm", "th_ppm", "water_content", "burial_depth_m"].includes(name))
    return "luminescence without a dose rate (burial depth: unless lab_cosmic_gy_per_ka is given)";
  if (name === "a_value") return "fine-grain luminescence without a dose rate";
  if (name.includes("error") && !["c14_error", "f14c_error", "de_error_gy", "delta_r_error"].includes(name))
    return name.startsWith("freshwater") ? "with freshwater_offset" : "optional: the lab's 1σ (else the stated default)";
  if (name === "curve") return "radiocarbon (empty: intcal20; marine material: marine20)";
  return "optional";
}

export async function templateXlsx(materials: string[], curves: string[]): Promise<Buffer> {
  const wb = new ExcelJS.Workbook();
  wb.creator = "Thawline";
  const data = wb.addWorksheet("Determinations", { views: [{ state: "frozen", ySplit: 1 }] });
  data.columns = COLUMNS.map((c) => ({ header: c.name, key: c.name, width: Math.max(12, c.name.length + 4) }));
  data.getRow(1).font = { bold: true };
  for (const row of EXAMPLE_ROWS) data.addRow(COLUMNS.map((c) => row[c.name] ?? null));

  const help = wb.addWorksheet("Columns", { views: [{ state: "frozen", ySplit: 1 }] });
  help.columns = [
    { header: "column", key: "name", width: 28 },
    { header: "what it holds", key: "help", width: 80 },
    { header: "unit", key: "unit", width: 34 },
    { header: "needed", key: "needed", width: 40 },
    { header: "example", key: "example", width: 22 },
  ];
  help.getRow(1).font = { bold: true };
  for (const c of COLUMNS) {
    const example = EXAMPLE_ROWS.map((r) => r[c.name]).find((v) => v !== undefined && v !== "");
    const choices = c.choices ? ` One of: ${c.choices.join(", ")}.` : "";
    help.addRow({ name: c.name, help: c.help + choices, unit: c.unit, needed: requirement(c.name), example: example ?? "" });
  }
  help.addRow({});
  help.addRow({ name: "materials", help: materials.join(", ") });
  help.addRow({ name: "curves", help: curves.join(", ") });
  help.getColumn("help").alignment = { wrapText: true, vertical: "top" };
  return Buffer.from(await wb.xlsx.writeBuffer());
}

export function templateCsv(): string {
  return toCsv(
    COLUMNS.map((c) => c.name),
    EXAMPLE_ROWS.map((r) => COLUMNS.map((c) => r[c.name] ?? null)),
  );
}

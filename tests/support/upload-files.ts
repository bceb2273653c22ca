// Invented upload files for tests and the bench: rows in the demo region with plainly fictional
// site names and lab codes (prefix ZZQ, used by no laboratory).
import ExcelJS from "exceljs";
import { COLUMN_NAMES } from "#app/utils/determination-input/columns.ts";

export type Cells = Record<string, string | number | Date | { formula: string; result?: number } | null | undefined>;

/** The invented paper the test rows cite: a DOI the registry may not know yet needs its citation. */
export const TEST_CITATION = {
  pub_authors: "Tester, A., Fixture, B.",
  pub_year: 2021,
  pub_title: "Invented radiocarbon and luminescence ages for tests",
  pub_journal: "Journal of Imaginary Glacial Studies 61, 1–9",
} as const;

/** `n` valid rows: radiocarbon (terrestrial and marine) and luminescence, up to 3 determinations per sample. */
export function uploadRows(n: number, options: { prefix?: string; seed?: number } = {}): Cells[] {
  const prefix = options.prefix ?? "ZZQ";
  let s = options.seed ?? 7;
  const rand = () => {
    s = (s * 1103515245 + 12345) % 2147483648;
    return s / 2147483648;
  };
  const rows: Cells[] = [];
  for (let i = 0; i < n; i++) {
    const siteNo = Math.floor(i / 6);
    const lat = 56 + (siteNo % 50) * 0.1 + 0.0123;
    const lon = -70 + Math.floor(siteNo / 50) * 0.1 - 0.0456;
    const base: Cells = {
      site_name: `Testfjord ${String(siteNo).padStart(4, "0")}`,
      latitude: Number(lat.toFixed(4)),
      longitude: Number(lon.toFixed(4)),
      elevation_m: Math.round(20 + rand() * 100),
      // A sample is one material: the letter keeps plant, shell and sand samples apart.
      sample_code: `TF${siteNo}-${"PPPPMMMLLL"[i % 10]}${Math.floor((i % 6) / 3)}`,
      depth_cm: Math.round(50 + rand() * 200),
      lab_code: `${prefix}-${String(i + 1).padStart(5, "0")}`,
      lab_name: "Testing Laboratory North",
      constraint_kind: "minimum",
      doi: "10.99999/thawline.test.1",
      ...TEST_CITATION,
    };
    const kind = i % 10;
    if (kind < 4) {
      rows.push({
        ...base,
        material: "plant macrofossil",
        method: "radiocarbon",
        c14_age: Math.round(6000 + rand() * 5000),
        c14_error: 40 + Math.round(rand() * 40),
        d13c: -26.1,
        curve: "intcal20",
      });
    } else if (kind < 7) {
      rows.push({
        ...base,
        material: "marine shell",
        method: "radiocarbon",
        c14_age: Math.round(7000 + rand() * 5000),
        c14_error: 45,
        d13c: 1.1,
        curve: "marine20",
        delta_r: 150,
        delta_r_error: 60,
        delta_r_curve: "marine20",
      });
    } else {
      rows.push({
        ...base,
        material: "quartz",
        method: "luminescence",
        signal: "OSL",
        mineral: "quartz",
        de_gy: Number((15 + rand() * 10).toFixed(2)),
        de_error_gy: 1.1,
        dose_rate_gy_per_ka: 2.05,
        dose_rate_error_gy_per_ka: 0.1,
        measurement_year: 2022,
        water_content: 0.12,
      });
    }
  }
  return rows;
}

function csvCell(v: Cells[string]): string {
  if (v == null) return "";
  const t = v instanceof Date ? v.toISOString().slice(0, 10) : typeof v === "object" ? `=${v.formula}` : String(v);
  return /[",\r\n]/.test(t) ? `"${t.replace(/"/g, '""')}"` : t;
}

export function toCsvText(rows: Cells[], headers: string[] = COLUMN_NAMES): string {
  return [headers.join(","), ...rows.map((r) => headers.map((h) => csvCell(r[h])).join(","))].join("\r\n") + "\r\n";
}

export async function toXlsx(rows: Cells[], headers: string[] = COLUMN_NAMES): Promise<Buffer> {
  const wb = new ExcelJS.Workbook();
  const ws = wb.addWorksheet("Determinations");
  ws.addRow(headers);
  for (const r of rows) ws.addRow(headers.map((h) => r[h] ?? null));
  return Buffer.from(await wb.xlsx.writeBuffer());
}

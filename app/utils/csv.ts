// CSV writing that is safe to open in a spreadsheet. Client-safe (no server imports).

const FORMULA_START = /^[=+\-@\t\r]/;

/**
 * Neutralises a cell a spreadsheet would read as a formula: text starting with = + - @, a tab or
 * a carriage return gets a leading single quote. Numbers are written as numbers (a negative
 * number is data, not a formula), so pass numbers as numbers and only text as strings.
 */
export function safeCell(value: string | number | boolean | null | undefined): string {
  if (value == null) return "";
  if (typeof value === "number") return Number.isFinite(value) ? String(value) : "";
  if (typeof value === "boolean") return value ? "true" : "false";
  return FORMULA_START.test(value) ? `'${value}` : value;
}

/** Quotes a (already safe) cell for CSV when it holds a comma, quote or line break. */
function quote(cell: string): string {
  return /[",\r\n]/.test(cell) ? `"${cell.replace(/"/g, '""')}"` : cell;
}

/** One CSV document (CRLF line ends, as RFC 4180 asks), every cell passed through safeCell. */
export function toCsv(header: string[], rows: (string | number | boolean | null | undefined)[][]): string {
  const lines = [header.map((h) => quote(safeCell(h))).join(",")];
  for (const row of rows) lines.push(row.map((c) => quote(safeCell(c))).join(","));
  return lines.join("\r\n") + "\r\n";
}

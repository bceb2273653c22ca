// Streaming CSV for downloads of any size, with the same spreadsheet safety as toCsv. Client-safe.
import { safeCell } from "#app/utils/csv.ts";
import { textStream } from "#app/utils/text-stream.ts";

export type CsvCell = string | number | boolean | null | undefined;

/** Quotes a (already safe) cell when it holds a comma, quote or line break. */
function quote(cell: string): string {
  return /[",\r\n]/.test(cell) ? `"${cell.replace(/"/g, '""')}"` : cell;
}

/**
 * One CSV line ending in CRLF. Text cells that a spreadsheet would run as a formula (starting
 * with = + - @, a tab or a carriage return) get a leading single quote; numbers stay numbers, so
 * a negative value such as -45 is written as -45 and read as a number, never as a formula.
 */
export function csvLine(cells: readonly CsvCell[]): string {
  let line = "";
  for (let i = 0; i < cells.length; i++) {
    if (i > 0) line += ",";
    const cell = cells[i];
    // Numbers and empty cells need neither the formula guard nor quotes (what safeCell gives them).
    if (typeof cell === "number") line += Number.isFinite(cell) ? String(cell) : "";
    else if (cell != null) line += quote(safeCell(cell));
  }
  return line + "\r\n";
}

/** The header line, then one line per row, as a generator (rows may themselves be produced lazily). */
export function* csvLines(header: readonly string[], rows: Iterable<readonly CsvCell[]>): Generator<string> {
  yield csvLine(header);
  for (const row of rows) yield csvLine(row);
}

/** A streamed CSV document. */
export function csvStream(header: readonly string[], rows: Iterable<readonly CsvCell[]>): ReadableStream<Uint8Array> {
  return textStream(csvLines(header, rows));
}

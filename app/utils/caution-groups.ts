// Cautions of an upload folded together: the same caution at the same column on many rows is one
// line naming its rows ("rows 2, 5, 7–12"), so a long file's page stays readable.

export type Caution = { row: number; column: string; message: string };
export type CautionGroup = { column: string; message: string; rows: number[] };

/** Groups cautions by column and message, in the order each first appears; rows ascending. */
export function groupCautions(cautions: readonly Caution[]): CautionGroup[] {
  const groups = new Map<string, CautionGroup>();
  for (const c of cautions) {
    const key = `${c.column}\u0000${c.message}`;
    const group = groups.get(key) ?? { column: c.column, message: c.message, rows: [] };
    group.rows.push(c.row);
    groups.set(key, group);
  }
  for (const g of groups.values()) g.rows = [...new Set(g.rows)].sort((a, b) => a - b);
  return [...groups.values()];
}

/** "row 4", "rows 2, 5 and 7–12": runs of consecutive rows as ranges. */
export function describeRows(rows: readonly number[], max = 12): string {
  const runs: string[] = [];
  for (let i = 0; i < rows.length;) {
    let j = i;
    while (j + 1 < rows.length && rows[j + 1] === rows[j]! + 1) j++;
    runs.push(j > i ? `${rows[i]}–${rows[j]}` : String(rows[i]));
    i = j + 1;
  }
  if (rows.length === 1) return `row ${rows[0]}`;
  const shown = runs.slice(0, max);
  const rest = runs.length > max ? ` and ${runs.length - max} more runs` : "";
  const list = shown.length === 1 ? shown[0] : rest ? shown.join(", ") : `${shown.slice(0, -1).join(", ")} and ${shown.at(-1)}`;
  return `rows ${list}${rest}`;
}

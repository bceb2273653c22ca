// Which column of the file is which registry column: header normalisation and the guessed mapping.

import { COLUMNS, columnSpec } from "#app/utils/determination-input/columns.ts";
import { columnForHeader } from "#app/utils/determination-input/headers.ts";

// The header reading itself lives in utils (the calibration page reads headers the same way).
export { normaliseHeader } from "#app/utils/determination-input/headers.ts";

/** Header → column name ("" = not used). */
export type ColumnMapping = Record<string, string>;

/**
 * Guesses which column each header holds: first the lab's remembered mapping, then the exact
 * template name, then common spellings. Each column is taken by at most one header.
 */
export function guessMapping(headers: string[], remembered?: ColumnMapping | null): ColumnMapping {
  const mapping: ColumnMapping = {};
  const taken = new Set<string>();
  const assign = (h: string, col: string | undefined) => {
    if (!col || taken.has(col) || mapping[h]) return;
    mapping[h] = col;
    taken.add(col);
  };
  for (const h of headers) if (COLUMNS.some((c) => c.name === h)) assign(h, h);
  if (remembered) for (const h of headers) if (remembered[h] && columnSpec(remembered[h]!)) assign(h, remembered[h]);
  for (const h of headers) assign(h, columnForHeader(h));
  for (const h of headers) if (!(h in mapping)) mapping[h] = "";
  return mapping;
}

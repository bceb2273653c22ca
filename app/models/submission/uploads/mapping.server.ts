// Which column of the file is which registry column: header normalisation and the guessed mapping.

import { COLUMNS, columnSpec } from "#app/utils/determination-input/columns.ts";

/** Header → column name ("" = not used). */
export type ColumnMapping = Record<string, string>;

/** Lower case, units in brackets and punctuation dropped, separators as single spaces. */
export function normaliseHeader(h: string): string {
  return h
    .toLowerCase()
    .replace(/\s*[([{][^)\]}]*[)\]}]\s*/g, " ")
    .replace(/[_\-./:]+/g, " ")
    .replace(/\s+/g, " ")
    .trim();
}

const BY_NORMALISED = new Map<string, string>();
for (const c of COLUMNS) {
  BY_NORMALISED.set(normaliseHeader(c.name), c.name);
  BY_NORMALISED.set(normaliseHeader(c.label), c.name);
  for (const s of c.synonyms ?? []) if (!BY_NORMALISED.has(normaliseHeader(s))) BY_NORMALISED.set(normaliseHeader(s), c.name);
}

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
  for (const h of headers) assign(h, BY_NORMALISED.get(normaliseHeader(h)));
  for (const h of headers) if (!(h in mapping)) mapping[h] = "";
  return mapping;
}

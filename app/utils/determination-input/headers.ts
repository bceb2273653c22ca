// Which template column a spreadsheet header names: the template's own name, its label or a common
// spelling. Client-safe, so the upload's column mapping and the calibration page read headers alike.

import { COLUMNS } from "#app/utils/determination-input/columns.ts";

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

/** The template column a header names, if any ("14C age (yr BP)" → c14_age). */
export function columnForHeader(header: string): string | undefined {
  return BY_NORMALISED.get(normaliseHeader(header));
}

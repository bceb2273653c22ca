// A row's publication: its DOI in the bare form, and its citation (authors, year, title, journal)
// given whole or not at all. Whether an unknown DOI still needs its citation is the placement's
// question (it knows the registry and the rest of the file). Client-safe, shared by the form,
// uploads and the API.

import { truncate } from "#app/utils/determination-input/cells.ts";
import type { RowState } from "#app/utils/determination-input/check-row.ts";
import { CITATION_PARTS } from "#app/utils/citation.ts";

const FIRST_PRINTED_YEAR = 1800;

export function checkPublication(row: RowState) {
  const given = row.text("doi");
  if (given !== undefined) {
    const doi = given.replace(/^(https?:\/\/)?(dx\.)?doi\.org\//i, "").replace(/^doi:\s*/i, "");
    if (/^10\.\d{4,9}\/\S+$/.test(doi)) row.out.doi = doi;
    else row.add("doi", `"${truncate(given)}" is not a DOI (they look like 10.99999/example.1).`);
  }
  const year = row.num("pub_year");
  const thisYear = row.ctx.currentYear ?? new Date().getFullYear();
  if (year !== undefined && (year < FIRST_PRINTED_YEAR || year > thisYear + 1)) {
    row.add("pub_year", `Year published ${year} is not between ${FIRST_PRINTED_YEAR} and ${thisYear + 1}.`);
  }
  const present = CITATION_PARTS.filter(([column]) => row.has(column) || row.bad(column));
  if (present.length === 0 || present.length === CITATION_PARTS.length) return;
  const words = CITATION_PARTS.map(([, w]) => w);
  for (const [column, word] of CITATION_PARTS) {
    if (!row.has(column) && !row.bad(column)) {
      row.add(
        column,
        `Give the publication's ${word} too: a citation needs its ${words.slice(0, -1).join(", ")} and ${words.at(-1)}.`,
      );
    }
  }
}

// A publication's citation as one line, written in one place: the registry stores it beside the
// fields (publications.citation) so every list, download and release cites the same words.

export type CitationFields = {
  authors: string | null;
  year: number | null;
  title: string | null;
  journal: string | null;
  doi: string | null;
};

/** The four parts a citation needs, as the upload columns name them, with the words a message uses. */
export const CITATION_PARTS = [
  ["pub_authors", "authors"],
  ["pub_year", "year"],
  ["pub_title", "title"],
  ["pub_journal", "journal"],
] as const;

function sentence(text: string): string {
  const t = text.trim();
  return /[.?!]$/.test(t) ? t : `${t}.`;
}

/**
 * "Frostvik, A., Kettle, B. (2019) Ice retreat in the north. Journal 41, 12–30." A publication stored
 * before citations were asked for has no title: it is said honestly as "untitled — doi:…".
 */
export function formatCitation(p: CitationFields): string {
  if (!p.title?.trim()) return p.doi ? `untitled — doi:${p.doi}` : "untitled";
  const authors = p.authors?.trim() ? p.authors.trim().replace(/[,;]$/, "") : "Unknown authors";
  const year = p.year ?? "n.d.";
  const journal = p.journal?.trim() ? ` ${sentence(p.journal)}` : "";
  return `${authors} (${year}) ${sentence(p.title)}${journal}`;
}

/** Title compared as people would: case, spacing and the closing full stop do not make another paper. */
export function titleKey(title: string): string {
  return title
    .normalize("NFKC")
    .toLowerCase()
    .replace(/\s+/g, " ")
    .replace(/[.\s]+$/, "")
    .trim();
}

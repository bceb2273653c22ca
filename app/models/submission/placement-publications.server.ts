// The publication rule of the placement: which publication a row cites, found or created once.
// A DOI the registry knows is that publication. A DOI it does not know needs the paper's citation
// (authors, year, title, journal) once — on the row, or on any row of the same file with that DOI —
// and is otherwise an error at the DOI: an unknown DOI never becomes a publication without a title.
// A citation without a DOI is the same paper as a stored or planned one of the same year and title.

import type { Db } from "#app/db/client.server.ts";
import { publications } from "#app/db/schema.ts";
import { formatCitation, titleKey } from "#app/utils/citation.ts";
import type { DeterminationRow, RowIssue } from "#app/utils/determination-input/row.ts";

export type Citation = { authors: string; year: number; title: string; journal: string };
type StoredPublication = { id: number; doi: string | null; title: string | null; citation: string };
/** A publication a file will create; rows citing it share this object, so it is written once. */
export type NewPublication = Citation & { doi: string | null; firstRow?: number; id?: number };
export type PublicationTarget = { publication: { id: number }; complete?: Citation } | { newPublication: NewPublication } | null;

/** The row's citation when all four parts are given (checkRow refuses a partial one). */
export function citationOf(row: Partial<DeterminationRow>): Citation | null {
  const { pub_authors: authors, pub_year: year, pub_title: title, pub_journal: journal } = row;
  if (authors === undefined || year === undefined || title === undefined || journal === undefined) return null;
  return { authors, year, title, journal };
}

function sameWork(a: { title: string | null }, b: Citation): boolean {
  return a.title !== null && titleKey(a.title) === titleKey(b.title);
}

export class PublicationPlanner {
  private readonly byDoi;
  private readonly byYear;
  private readonly stored = new Map<string, StoredPublication | null>();
  private readonly newByDoi = new Map<string, NewPublication>();
  private readonly newByTitle = new Map<string, NewPublication>();
  /** Citations given anywhere in the file, by DOI: a row may cite a DOI whose citation comes on a later row. */
  private readonly offered = new Map<string, Citation & { n?: number }>();
  private readonly completed = new Set<number>();

  constructor(
    private readonly db: Db,
    private readonly oneRecord: boolean,
  ) {
    this.byDoi = db.$client.prepare("select id, doi, title, citation from publications where lower(doi) = lower(?)");
    this.byYear = db.$client.prepare("select id, doi, title, citation from publications where year = ? and title is not null");
  }

  /** Reads the citations a whole file gives before its rows are planned (the first given for a DOI counts). */
  offer(rows: Iterable<{ row: Partial<DeterminationRow>; n?: number }>) {
    for (const { row, n } of rows) {
      const citation = citationOf(row);
      const key = row.doi?.toLowerCase();
      if (citation && key && !this.offered.has(key)) this.offered.set(key, { ...citation, n });
    }
  }

  private storedByDoi(doi: string): StoredPublication | null {
    const key = doi.toLowerCase();
    if (!this.stored.has(key)) this.stored.set(key, (this.byDoi.get(doi) as StoredPublication | undefined) ?? null);
    return this.stored.get(key) ?? null;
  }

  plan(row: Partial<DeterminationRow>, n: number | undefined, issues: RowIssue[], warnings: RowIssue[]): PublicationTarget {
    const citation = citationOf(row);
    const doi = row.doi;
    if (!doi) return citation ? this.planUnidentified(citation, n) : null;
    const stored = this.storedByDoi(doi);
    if (stored) {
      if (stored.title === null) return { publication: stored, complete: citation ?? this.offered.get(doi.toLowerCase()) };
      if (citation && !sameWork(stored, citation)) {
        warnings.push({
          column: "pub_title",
          message: `The registry already has ${doi} as “${stored.citation}”; the citation given here is not used.`,
        });
      }
      return { publication: stored };
    }
    const planned = this.newByDoi.get(doi.toLowerCase());
    if (planned) {
      if (citation && !sameWork(planned, citation)) {
        issues.push({
          column: "pub_title",
          message: `Row ${planned.firstRow ?? "?"} of this file gives ${doi} the title “${planned.title}”: one DOI is one publication. Give the same citation, or none.`,
        });
        return null;
      }
      return { newPublication: planned };
    }
    const given = citation ?? this.offered.get(doi.toLowerCase());
    if (!given) {
      issues.push({
        column: "doi",
        message: this.oneRecord
          ? `${doi} is not in the registry yet: give the publication's pub_authors, pub_year, pub_title and pub_journal once, so it can be cited.`
          : `${doi} is not in the registry yet: give its citation (pub_authors, pub_year, pub_title, pub_journal) once, on this row or on another row of this file with the same DOI.`,
      });
      return null;
    }
    const created: NewPublication = {
      authors: given.authors,
      year: given.year,
      title: given.title,
      journal: given.journal,
      doi,
      firstRow: n,
    };
    this.newByDoi.set(doi.toLowerCase(), created);
    this.newByTitle.set(`${given.year}|${titleKey(given.title)}`, created);
    return { newPublication: created };
  }

  private planUnidentified(citation: Citation, n: number | undefined): PublicationTarget {
    const key = `${citation.year}|${titleKey(citation.title)}`;
    const stored = (this.byYear.all(citation.year) as StoredPublication[]).find((p) => sameWork(p, citation));
    if (stored) return { publication: stored };
    const planned = this.newByTitle.get(key);
    if (planned) return { newPublication: planned };
    const created: NewPublication = { ...citation, doi: null, firstRow: n };
    this.newByTitle.set(key, created);
    return { newPublication: created };
  }

  /** Writes what the target needs and returns the publication's id; call inside the caller's transaction. */
  place(target: PublicationTarget, batchId: number | null = null): number | null {
    if (!target) return null;
    if ("publication" in target) {
      const { id } = target.publication;
      if (target.complete && !this.completed.has(id)) this.complete(id, target.complete);
      return id;
    }
    const p = target.newPublication;
    p.id ??= this.db
      .insert(publications)
      .values({
        authors: p.authors,
        year: p.year,
        title: p.title,
        journal: p.journal,
        doi: p.doi,
        citation: formatCitation({ ...p, doi: p.doi }),
        createdInBatchId: batchId,
      })
      .returning({ id: publications.id })
      .get().id;
    return p.id;
  }

  /** A publication stored before citations were asked for gets the citation a row now gives. */
  private complete(id: number, c: Citation) {
    const doi = this.db.$client.prepare("select doi from publications where id = ? and title is null").pluck().get(id) as
      string | null | undefined;
    if (doi !== undefined) {
      this.db.$client
        .prepare("update publications set authors = ?, year = ?, title = ?, journal = ?, citation = ? where id = ?")
        .run(c.authors, c.year, c.title, c.journal, formatCitation({ ...c, doi }), id);
    }
    this.completed.add(id);
  }
}

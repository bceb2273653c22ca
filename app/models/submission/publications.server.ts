// Stored publications as editors see and correct them. A correction rewrites the one-line citation
// (utils/citation.ts) from the corrected parts, so every list and new download cites the new words;
// releases keep the rows exactly as released. One transaction, audited with the words before and after.

import type { Db } from "#app/db/client.server.ts";
import { audit } from "#app/models/audit.server.ts";
import { formatCitation, type CitationFields } from "#app/utils/citation.ts";
import { escapeLike } from "#app/utils/sql-like.ts";

export type PublicationRow = CitationFields & { id: number; citation: string; cited: number };

/** A publication as the pages show it, with how many determinations cite it. */
const SELECT_PUBLICATION = `select p.id, p.citation, p.doi, p.year, p.authors, p.title, p.journal,
    (select count(*) from determinations d where d.publication_id = p.id) as cited
  from publications p`;

/** Every publication (or those whose citation or DOI holds `q`), newest year first, with how many determinations cite it. */
export function listPublications(db: Db, q?: string): PublicationRow[] {
  const like = q?.trim() ? `%${escapeLike(q.trim())}%` : null;
  return db.$client
    .prepare(
      `${SELECT_PUBLICATION}
       ${like ? "where p.citation like ? escape '\\' or p.doi like ? escape '\\'" : ""}
       order by p.year is null, p.year desc, p.citation`,
    )
    .all(...(like ? [like, like] : [])) as PublicationRow[];
}

export function getPublication(db: Db, id: number): PublicationRow | undefined {
  return db.$client.prepare(`${SELECT_PUBLICATION} where p.id = ?`).get(id) as PublicationRow | undefined;
}

/** The id of another publication that already has this DOI (compared without case), if any. */
export function doiTakenBy(db: Db, doi: string, exceptId: number): PublicationRow | undefined {
  const id = db.$client
    .prepare("select id from publications where lower(doi) = lower(?) and id <> ?")
    .pluck()
    .get(doi, exceptId) as number | undefined;
  return id === undefined ? undefined : getPublication(db, id);
}

/** Corrects a publication's parts and rewrites its citation; null when nothing changed. */
export function correctPublication(
  db: Db,
  id: number,
  fields: CitationFields,
  actor: { actorId: number; ip?: string | null },
): { before: string; after: string } | null {
  return db.transaction((tx) => {
    const before = getPublication(db, id);
    if (!before) return null;
    const citation = formatCitation(fields);
    const same =
      before.authors === fields.authors &&
      before.year === fields.year &&
      before.title === fields.title &&
      before.journal === fields.journal &&
      before.doi === fields.doi;
    if (same) return null;
    db.$client
      .prepare("update publications set authors = ?, year = ?, title = ?, journal = ?, doi = ?, citation = ? where id = ?")
      .run(fields.authors, fields.year, fields.title, fields.journal, fields.doi, citation, id);
    audit(tx, {
      actorId: actor.actorId,
      action: "publication.update",
      entity: "publication",
      entityId: id,
      before: { citation: before.citation, doi: before.doi },
      after: { citation, doi: fields.doi },
      ip: actor.ip,
    });
    return { before: before.citation, after: citation };
  });
}

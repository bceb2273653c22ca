/**
 * A publication as people cite it: its one-line citation, then its DOI as a link. A publication stored
 * before citations were asked for has only its DOI and says so ("untitled — doi:…"), never a made-up title.
 */
export function PublicationCitation({
  publication,
}: {
  publication: { citation: string; doi: string | null; title: string | null };
}) {
  const { doi } = publication;
  const link = doi ? (
    <a href={`https://doi.org/${doi}`} rel="noopener noreferrer">
      doi:{doi}
    </a>
  ) : null;
  if (publication.title === null && doi) return <span>untitled — {link}</span>;
  return (
    <span>
      {publication.citation}
      {link ? <> {link}</> : null}
    </span>
  );
}

/**
 * A publication as people cite it: its one-line citation, then its DOI as a link. A publication stored
 * before citations were asked for has only its DOI and says so ("untitled — doi:…"), never a made-up title.
 */
export function PublicationCitation({
  publication,
}: {
  publication: { citation: string; doi: string | null; title?: string | null };
}) {
  const { doi } = publication;
  // A stored one-line citation may already end with its DOI (a release's frozen "untitled — doi:…"):
  // the DOI is then written once, as the link.
  const suffix = doi ? `doi:${doi}` : null;
  const text =
    suffix && publication.citation.endsWith(suffix)
      ? publication.citation.slice(0, -suffix.length).trimEnd()
      : publication.citation;
  const link = doi ? (
    <a href={`https://doi.org/${doi}`} rel="noopener noreferrer">
      doi:{doi}
    </a>
  ) : null;
  if (publication.title === null && doi) return <span>untitled — {link}</span>;
  return (
    <span>
      {text}
      {link ? <> {link}</> : null}
    </span>
  );
}

import { Link } from "react-router";

/** Page numbers: first, last, and two either side of the current page, with gaps marked. */
export function pageList(page: number, pageCount: number): (number | "gap")[] {
  const wanted = new Set([1, pageCount, page - 2, page - 1, page, page + 1, page + 2]);
  const pages = [...wanted].filter((p) => p >= 1 && p <= pageCount).sort((a, b) => a - b);
  const out: (number | "gap")[] = [];
  pages.forEach((p, i) => {
    if (i > 0 && p - pages[i - 1]! > 1) out.push("gap");
    out.push(p);
  });
  return out;
}

/**
 * The one page navigation of the app: previous, numbered pages with gaps, next. Plain links, so it
 * works without script; `href` gives the address of a page (keeping the list's filters).
 */
export function Pagination({
  page,
  pageCount,
  href,
  testId,
  previousLabel = "← Previous",
  nextLabel = "Next →",
}: {
  page: number;
  pageCount: number;
  href: (page: number) => string;
  testId?: string;
  previousLabel?: string;
  nextLabel?: string;
}) {
  if (pageCount <= 1) return null;
  return (
    <nav aria-label="Pages" className="flex flex-wrap items-center gap-2" data-testid={testId}>
      {page > 1 ? (
        <Link to={href(page - 1)} className="btn-quiet" rel="prev">
          {previousLabel}
        </Link>
      ) : (
        <span className="btn-quiet opacity-50" aria-disabled="true">
          {previousLabel}
        </span>
      )}
      <ol className="flex flex-wrap items-center gap-1">
        {pageList(page, pageCount).map((p, i) =>
          p === "gap" ? (
            <li key={`gap-${i}`} className="px-1 text-muted" aria-hidden="true">
              …
            </li>
          ) : (
            <li key={p}>
              {p === page ? (
                <span aria-current="page" className="inline-block min-w-9 rounded bg-ice-800 px-2 py-1 text-center text-white">
                  {p.toLocaleString("en")}
                </span>
              ) : (
                <Link
                  to={href(p)}
                  className="inline-block min-w-9 rounded px-2 py-1 text-center hover:bg-ice-50"
                  aria-label={`Page ${p.toLocaleString("en")}`}
                >
                  {p.toLocaleString("en")}
                </Link>
              )}
            </li>
          ),
        )}
      </ol>
      {page < pageCount ? (
        <Link to={href(page + 1)} className="btn-quiet" rel="next">
          {nextLabel}
        </Link>
      ) : (
        <span className="btn-quiet opacity-50" aria-disabled="true">
          {nextLabel}
        </span>
      )}
    </nav>
  );
}

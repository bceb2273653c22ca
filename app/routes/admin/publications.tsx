import { Form, Link, useNavigation, useSearchParams } from "react-router";
import type { Route } from "./+types/publications";
import { requireRole } from "#app/auth/session.server.ts";
import { ErrorView } from "#app/components/error-view.tsx";
import { getDb } from "#app/db/client.server.ts";
import { listPublications } from "#app/models/submission/publications.server.ts";
import { formatCount } from "#app/utils/age-format.ts";

export const meta: Route.MetaFunction = () => [{ title: "Publications — Thawline" }];

export async function loader({ request }: Route.LoaderArgs) {
  // Editors only.
  await requireRole(request, "editor");
  const q = (new URL(request.url).searchParams.get("q") ?? "").slice(0, 200);
  return { q, publications: listPublications(getDb(), q) };
}

export default function Publications({ loaderData }: Route.ComponentProps) {
  const { q, publications } = loaderData;
  const [params] = useSearchParams();
  const searching = useNavigation().state === "loading";
  return (
    <div className="grid gap-8">
      <header>
        <h1>Publications</h1>
        <p className="mt-2 max-w-3xl text-muted">
          Every paper the registry cites, as its determinations cite it. Correct a citation here when a contributor&apos;s
          authors, year, title, journal or DOI were wrong: every page and every new download then cites the corrected words.
          Published releases keep the words they were published with.
        </p>
      </header>
      <Form method="get" role="search" className="flex flex-wrap items-end gap-3">
        <div className="field">
          <label htmlFor="publications-q">Find a publication</label>
          <input
            id="publications-q"
            name="q"
            type="search"
            className="input w-80"
            defaultValue={params.get("q") ?? ""}
            placeholder="Author, title, journal or DOI"
            maxLength={200}
          />
        </div>
        <button type="submit" className="btn-quiet">
          Find
        </button>
        {q ? (
          <Link to="/publications" className="text-sm">
            Show all
          </Link>
        ) : null}
      </Form>
      {publications.length === 0 ? (
        <p className="rounded border border-dashed border-rule px-4 py-6 text-center text-muted" data-testid="publications-empty">
          {q ? `No publication matches “${q}”.` : "No publication is stored yet: they arrive with the dates that cite them."}
        </p>
      ) : (
        <table className={`data-table ${searching ? "opacity-60" : ""}`} data-testid="publications">
          <caption className="sr-only">Publications, newest first</caption>
          <thead>
            <tr>
              <th scope="col">Citation</th>
              <th scope="col">DOI</th>
              <th scope="col" className="text-right">
                Cited by
              </th>
              <th scope="col">
                <span className="sr-only">Correct</span>
              </th>
            </tr>
          </thead>
          <tbody>
            {publications.map((p) => (
              <tr key={p.id}>
                <td className="max-w-2xl">{p.citation}</td>
                <td className="whitespace-nowrap">{p.doi ?? <span className="text-muted">none</span>}</td>
                <td className="text-right tabular-nums">
                  {formatCount(p.cited)} determination{p.cited === 1 ? "" : "s"}
                </td>
                <td className="text-right">
                  <Link to={`/publications/${p.id}`} aria-label={`Correct the citation: ${p.citation}`}>
                    Correct
                  </Link>
                </td>
              </tr>
            ))}
          </tbody>
        </table>
      )}
    </div>
  );
}

export function ErrorBoundary({ error }: Route.ErrorBoundaryProps) {
  return <ErrorView error={error} />;
}

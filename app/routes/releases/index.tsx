import { Link } from "react-router";
import type { Route } from "./+types/index";
import { ErrorView } from "#app/components/error-view.tsx";
import { getDb } from "#app/db/client.server.ts";
import { listReleases } from "#app/models/releases/releases.server.ts";
import { formatDay } from "#app/utils/time-format.ts";

export const meta: Route.MetaFunction = () => [{ title: "Releases · Thawline" }];

export async function loader() {
  // Public: published releases are open data.
  return {
    releases: listReleases(getDb()).map((r) => ({
      slug: r.slug,
      name: r.name,
      version: r.version,
      description: r.description,
      count: r.itemCount,
      publishedAt: r.publishedAt,
      checksum: r.checksum,
    })),
  };
}

export default function Releases({ loaderData }: Route.ComponentProps) {
  const { releases } = loaderData;
  return (
    <div>
      <h1>Releases</h1>
      <p className="mt-1 max-w-3xl text-muted">
        Frozen, citable constraint sets. A release never changes once published; each carries a checksum so a copy can be checked
        byte for byte.
      </p>
      {releases.length === 0 ? (
        <p className="card mt-6">No release has been published yet.</p>
      ) : (
        <table className="data-table mt-6" data-testid="release-list">
          <thead>
            <tr>
              <th scope="col">Release</th>
              <th scope="col">Version</th>
              <th scope="col" className="text-right">
                Constraints
              </th>
              <th scope="col">Published</th>
              <th scope="col">SHA-256</th>
            </tr>
          </thead>
          <tbody>
            {releases.map((r) => (
              <tr key={r.slug}>
                <td>
                  <Link to={`/releases/${r.slug}`}>{r.name}</Link>
                  {r.description ? <p className="text-sm text-muted">{r.description}</p> : null}
                </td>
                <td>{r.version}</td>
                <td className="text-right tabular-nums">{r.count.toLocaleString("en")}</td>
                <td>{formatDay(r.publishedAt)}</td>
                <td className="font-mono text-sm">{r.checksum.slice(0, 12)}…</td>
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

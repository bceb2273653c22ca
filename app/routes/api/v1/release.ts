import type { Route } from "./+types/release";
import { getDb } from "#app/db/client.server.ts";
import { badParameters, parseOutput } from "#app/models/releases/api-request.server.ts";
import { releaseResponse } from "#app/models/releases/release-download.server.ts";
import { releaseBySlug } from "#app/models/releases/releases.server.ts";
import { json } from "#app/utils/http.server.ts";
import { cachedDownload } from "#app/models/registry/download-cache.server.ts";

/*
 * GET /api/v1/releases/{slug}?format=json|csv|geojson|metadata&densities=true — public: the frozen
 * items with the release's checksum and citation; the same bytes every time.
 */
export async function loader({ request, params }: Route.LoaderArgs) {
  // Public: published releases are open data.
  const url = new URL(request.url);
  const errors: string[] = [];
  const output = parseOutput(url.searchParams, errors);
  for (const k of url.searchParams.keys())
    if (k !== "format" && k !== "densities") errors.push(`${k}: not a parameter of this endpoint`);
  if (errors.length > 0) return badParameters(errors);
  const db = getDb();
  const release = releaseBySlug(db, params.slug);
  if (!release) return json({ error: `No release “${params.slug.slice(0, 80)}”.` }, { status: 404 });
  // A published release never changes: its files are kept by release (id and checksum), format and origin (the
  // page address inside them), whatever else is written meanwhile.
  const pageUrl = `${url.origin}/releases/${release.slug}`;
  return cachedDownload(
    db,
    request,
    `release ${release.id} ${release.checksum} ${output.format} ${output.densities} ${pageUrl}`,
    () => releaseResponse(db, release, output.format, pageUrl, output.densities),
    { immutable: true },
  );
}

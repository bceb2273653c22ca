import type { Route } from "./+types/constraints-download";
import { requireUser } from "#app/auth/session.server.ts";
import { getDb } from "#app/db/client.server.ts";
import { badParameters, filterFromParams, parseOutput } from "#app/models/releases/api-request.server.ts";
import { selectConstraints, selectionResponse } from "#app/models/releases/selection-download.server.ts";
import { cachedDownload } from "#app/models/registry/download-cache.server.ts";
import { normaliseFormParams } from "#app/utils/constraint-filter.ts";

/** GET /constraints/download?…filter…&format=csv|json|geojson|metadata[&densities=true] — the page's downloads; signed in. */
export async function loader({ request }: Route.LoaderArgs) {
  await requireUser(request);
  const url = new URL(request.url);
  const params = normaliseFormParams(url.searchParams);
  const errors: string[] = [];
  const output = parseOutput(params, errors);
  const filter = filterFromParams(params, errors);
  if (errors.length > 0 || !filter) return badParameters(errors);
  const metadataUrl = new URL(url);
  metadataUrl.searchParams.set("format", "metadata");
  metadataUrl.searchParams.delete("densities");
  const db = getDb();
  return cachedDownload(db, request, `page-constraints ${output.format} ${output.densities} ${metadataUrl}`, () =>
    selectionResponse(db, selectConstraints(db, filter), output.format, {
      densities: output.densities,
      metadataUrl: metadataUrl.toString(),
    }),
  );
}

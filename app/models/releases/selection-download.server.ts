// A download of exactly what a filter selects now: the ad-hoc constraint set of the page and API.
import type { Db } from "#app/db/client.server.ts";
import {
  CAUTIONS,
  CONTENT_TYPES,
  csvDownload,
  geojsonDownload,
  jsonDownload,
  TIME_WINDOW_RULE,
  usageOf,
  type DensityOut,
  type DownloadFormat,
  type DownloadMetadata,
} from "#app/models/releases/downloads.server.ts";
import { selectionIds } from "#app/models/registry/constraints.server.ts";
import { densitiesFor, selectionItems, type SelectedRow } from "#app/models/releases/selection.server.ts";
import { decodeDensity } from "#app/models/calibration/calibrations.server.ts";
import { filterRecord, type ConstraintFilter } from "#app/utils/constraint-filter.ts";

export type Selection = { rows: SelectedRow[]; metadata: DownloadMetadata };

/** Everything a filter selects, with its metadata (items in id order). */
export function selectConstraints(db: Db, filter: ConstraintFilter, exportedAt = new Date()): Selection {
  const rows = [...selectionItems(db, selectionIds(db, filter))];
  const { curves, citations } = usageOf(db, rows);
  const record: Record<string, unknown> = filterRecord(filter);
  if (filter.geometry) record.geometry = filter.geometry;
  return {
    rows,
    metadata: {
      filter: record,
      count: rows.length,
      curves,
      exported_at: exportedAt.toISOString(),
      citations,
      time_window_rule: TIME_WINDOW_RULE,
      cautions: CAUTIONS,
    },
  };
}

/** Items with their densities, read from the database a few hundred at a time as the stream is pulled. */
export function* withDensities(
  db: Db,
  rows: readonly SelectedRow[],
  batch = 500,
): Generator<{ item: object; density: DensityOut | null }> {
  for (let i = 0; i < rows.length; i += batch) {
    const slice = rows.slice(i, i + batch);
    const blobs = densitiesFor(
      db,
      slice.map((r) => r.calibrationId),
    );
    for (const r of slice) {
      const b = blobs.get(r.calibrationId);
      const d = b ? decodeDensity(b.blob, b.start) : null;
      yield { item: r.item, density: d ? { start: d.startCalBp, values: d.values } : null };
    }
  }
}

/** The HTTP response for a download of a selection in a format. */
export function selectionResponse(
  db: Db,
  selection: Selection,
  format: DownloadFormat,
  options: { densities?: boolean; fileName?: string; metadataUrl?: string } = {},
): Response {
  const { rows, metadata } = selection;
  const base = options.fileName ?? "thawline-constraints";
  const headers = new Headers({ "Cache-Control": "no-store", "X-Content-Type-Options": "nosniff" });
  if (format === "metadata") {
    headers.set("Content-Type", "application/json; charset=utf-8");
    headers.set("Content-Disposition", `attachment; filename="${base}.metadata.json"`);
    return new Response(JSON.stringify(metadata, null, 2) + "\n", { headers });
  }
  headers.set("Content-Type", CONTENT_TYPES[format]);
  headers.set("Content-Disposition", `attachment; filename="${base}.${format}"`);
  headers.set("X-Thawline-Count", String(metadata.count));
  headers.set("X-Thawline-Exported-At", metadata.exported_at);
  if (format === "csv") {
    if (options.metadataUrl) headers.set("Link", `<${options.metadataUrl}>; rel="describedby"; type="application/json"`);
    return new Response(csvDownload(rows.map((r) => r.item)), { headers });
  }
  if (format === "geojson")
    return new Response(
      geojsonDownload(
        metadata,
        rows.map((r) => r.item),
      ),
      { headers },
    );
  const items = options.densities ? withDensities(db, rows) : rows.map((r) => ({ item: r.item }));
  return new Response(jsonDownload(metadata, items), { headers });
}

// A download of exactly what a filter selects now: the ad-hoc constraint set of the page and API.
// The selection is fixed as a list of ids with its metadata; the items themselves are read a
// couple of thousand at a time while the response is written, so a download never holds them all.
import type { Db } from "#app/db/client.server.ts";
import {
  CAUTIONS,
  CONTENT_TYPES,
  csvDownload,
  curvesOf,
  geojsonDownload,
  jsonDownload,
  sortCitations,
  TIME_WINDOW_RULE,
  type CitationUse,
  type CurveUse,
  type DensityOut,
  type DownloadFormat,
  type DownloadMetadata,
} from "#app/models/releases/downloads.server.ts";
import { selectionIds } from "#app/models/registry/constraints.server.ts";
import { densitiesFor, selectionItems, type SelectedRow } from "#app/models/releases/selection.server.ts";
import { decodeDensity } from "#app/models/calibration/calibrations.server.ts";
import { densityText, heldDensityText } from "#app/models/releases/density-text.server.ts";
import { CURRENT_CALIBRATION_JOIN } from "#app/models/registry/conditions.server.ts";
import { filterRecord, type ConstraintFilter } from "#app/utils/constraint-filter.ts";

/** What a filter selected (ids ascending) and the metadata every download of it carries. */
export type Selection = { ids: number[]; metadata: DownloadMetadata };

/**
 * Curves and publications of the selected determinations, counted in SQL (no items built): the
 * same groups, counts and order as usageOf over the items (groups in order of first use).
 */
function selectionUsage(db: Db, ids: readonly number[]): { curves: CurveUse[]; citations: CitationUse[] } {
  const json = JSON.stringify(ids);
  // With one min() in a grouped query SQLite takes the bare columns from that row: the first use.
  const groups = db.$client
    .prepare(
      `select c.curve_id as id, d.method as label, count(*) as count, min(d.id) as first
       from determinations d join ${CURRENT_CALIBRATION_JOIN}
       where d.id in (select value from json_each(?))
       group by coalesce('id:' || c.curve_id, 'label:' || d.method) order by first`,
    )
    .all(json) as { id: number | null; label: string; count: number }[];
  const pubs = db.$client
    .prepare(
      `select p.citation, p.doi, count(*) as count, min(d.id) as first
       from determinations d join ${CURRENT_CALIBRATION_JOIN} join publications p on p.id = d.publication_id
       where d.id in (select value from json_each(?))
       group by coalesce(p.doi, '') || '|' || p.citation order by first`,
    )
    .all(json) as (CitationUse & { first: number })[];
  return {
    curves: curvesOf(db, groups),
    citations: sortCitations(pubs.map(({ citation, doi, count }) => ({ citation, doi, count }))),
  };
}

/** What a filter selects now, with its metadata. */
export function selectConstraints(db: Db, filter: ConstraintFilter, exportedAt = new Date()): Selection {
  const ids = selectionIds(db, filter);
  const { curves, citations } = selectionUsage(db, ids);
  const record: Record<string, unknown> = filterRecord(filter);
  if (filter.geometry) record.geometry = filter.geometry;
  return {
    ids,
    metadata: {
      filter: record,
      count: ids.length,
      curves,
      exported_at: exportedAt.toISOString(),
      citations,
      time_window_rule: TIME_WINDOW_RULE,
      cautions: CAUTIONS,
    },
  };
}

function* itemsOf(rows: Iterable<SelectedRow>) {
  for (const r of rows) yield r.item;
}

function* wrapped(items: Iterable<object>) {
  for (const item of items) yield { item };
}

/**
 * Items with their densities as text, a few hundred at a time as the stream is pulled. A density
 * already held as text (by its hash, density-text.server.ts) is neither read nor written again.
 */
export function* withDensities(
  db: Db,
  rows: Iterable<SelectedRow>,
  batch = 500,
): Generator<{ item: object; density: DensityOut | null }> {
  let slice: SelectedRow[] = [];
  const flush = function* () {
    const texts = slice.map((r) => heldDensityText(r.density?.sha256));
    const blobs = densitiesFor(
      db,
      slice.filter((_, k) => !texts[k]).map((r) => r.calibrationId),
    );
    for (let k = 0; k < slice.length; k++) {
      const r = slice[k]!;
      const held = texts[k];
      if (held) {
        yield { item: r.item, density: { start: r.density!.start, text: held } };
        continue;
      }
      const b = blobs.get(r.calibrationId);
      const d = b ? decodeDensity(b.blob, b.start) : null;
      yield { item: r.item, density: d ? { start: d.startCalBp, text: densityText(r.density?.sha256, d.values) } : null };
    }
    slice = [];
  };
  for (const r of rows) {
    slice.push(r);
    if (slice.length === batch) yield* flush();
  }
  yield* flush();
}

/** The HTTP response for a download of a selection in a format. */
export function selectionResponse(
  db: Db,
  selection: Selection,
  format: DownloadFormat,
  options: { densities?: boolean; fileName?: string; metadataUrl?: string } = {},
): Response {
  const { ids, metadata } = selection;
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
  // Read lazily: the generators run as the response is pulled.
  const rows = selectionItems(db, ids);
  if (format === "csv") {
    if (options.metadataUrl) headers.set("Link", `<${options.metadataUrl}>; rel="describedby"; type="application/json"`);
    return new Response(csvDownload(itemsOf(rows)), { headers });
  }
  if (format === "geojson") return new Response(geojsonDownload(metadata, itemsOf(rows)), { headers });
  const items = options.densities ? withDensities(db, rows) : wrapped(itemsOf(rows));
  return new Response(jsonDownload(metadata, items), { headers });
}

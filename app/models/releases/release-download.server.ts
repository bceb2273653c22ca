// Downloads of a published release. Everything comes from the frozen rows and the release's own
// record (exported_at is the publication time), so a download is the same, byte for byte, every time.
import type { Db } from "#app/db/client.server.ts";
import {
  CAUTIONS,
  CONTENT_TYPES,
  csvDownload,
  geojsonDownload,
  jsonDownload,
  TIME_WINDOW_RULE,
  type CitationUse,
  type DownloadFormat,
  type DownloadMetadata,
} from "#app/models/releases/downloads.server.ts";
import {
  releaseItemsWithDensities,
  releaseItemTexts,
  type FrozenItem,
  type ReleaseRow,
} from "#app/models/releases/releases.server.ts";

function citationsOf(items: readonly FrozenItem[]): CitationUse[] {
  const map = new Map<string, CitationUse>();
  for (const { publication } of items) {
    if (!publication) continue;
    const key = `${publication.doi ?? ""}|${publication.citation}`;
    const c = map.get(key) ?? { ...publication, count: 0 };
    c.count++;
    map.set(key, c);
  }
  return [...map.values()].sort((a, b) => a.citation.localeCompare(b.citation));
}

export function releaseMetadata(release: ReleaseRow, items: readonly FrozenItem[], pageUrl: string): DownloadMetadata {
  const publishedAt = new Date(release.publishedAt).toISOString();
  return {
    release: {
      slug: release.slug,
      name: release.name,
      version: release.version,
      description: release.description,
      published_at: publishedAt,
      checksum: release.checksum,
      checksum_rule: release.checksumRule,
      citation: release.citation,
      url: pageUrl,
    },
    checksum: release.checksum,
    checksum_rule: release.checksumRule,
    citation: release.citation,
    filter: release.filter,
    count: release.itemCount,
    curves: release.curves,
    exported_at: publishedAt,
    citations: citationsOf(items),
    time_window_rule: TIME_WINDOW_RULE,
    cautions: CAUTIONS,
  };
}

/**
 * The response for a release download. The JSON's `constraints` are the stored frozen texts, so
 * the checksum recomputed from them by the documented rule equals `checksum`.
 */
export function releaseResponse(
  db: Db,
  release: ReleaseRow,
  format: DownloadFormat,
  pageUrl: string,
  densities = false,
): Response {
  const texts = releaseItemTexts(db, release.id);
  const items = texts.map((t) => JSON.parse(t) as FrozenItem);
  const meta = releaseMetadata(release, items, pageUrl);
  const headers = new Headers({
    "Cache-Control": "public, max-age=300",
    "X-Content-Type-Options": "nosniff",
    "X-Thawline-Checksum": release.checksum,
    "X-Thawline-Count": String(release.itemCount),
  });
  const name = `thawline-${release.slug}`;
  if (format === "metadata") {
    headers.set("Content-Type", "application/json; charset=utf-8");
    headers.set("Content-Disposition", `attachment; filename="${name}.metadata.json"`);
    return new Response(JSON.stringify(meta, null, 2) + "\n", { headers });
  }
  headers.set("Content-Type", CONTENT_TYPES[format]);
  headers.set("Content-Disposition", `attachment; filename="${name}.${format}"`);
  if (format === "csv") {
    headers.set(
      "Link",
      `<${pageUrl.replace("/releases/", "/api/v1/releases/")}?format=metadata>; rel="describedby"; type="application/json"`,
    );
    return new Response(csvDownload(items), { headers });
  }
  if (format === "geojson") return new Response(geojsonDownload(meta, items), { headers });
  return new Response(
    jsonDownload(meta, densities ? releaseItemsWithDensities(db, release.id) : items.map((item) => ({ item }))),
    {
      headers,
    },
  );
}

// Downloads of a constraint set or a release: CSV, GeoJSON and JSON (optionally with the full
// calendar densities), all streamed, all carrying the same metadata. See
// docs/decisions/010-csv-downloads-and-their-metadata.md for why CSV's metadata is a second file.
import type { Db } from "#app/db/client.server.ts";
import type { ConstraintItem, SelectedRow } from "#app/models/releases/selection.server.ts";
import { csvStream, type CsvCell } from "#app/utils/csv-stream.ts";
import { geojsonStream } from "#app/utils/geojson-stream.ts";
import { textStream } from "#app/utils/text-stream.ts";

export const DOWNLOAD_FORMATS = ["json", "csv", "geojson", "metadata"] as const;
export type DownloadFormat = (typeof DOWNLOAD_FORMATS)[number];

export type CurveUse = { curve: string; version: string | null; citation: string | null; doi: string | null; count: number };
export type CitationUse = { citation: string; doi: string | null; count: number };

export type DownloadMetadata = {
  filter: Record<string, unknown>;
  count: number;
  curves: CurveUse[];
  exported_at: string;
  citations: CitationUse[];
  time_window_rule: string;
  cautions: string[];
  release?: {
    slug: string;
    name: string;
    version: string;
    description: string | null;
    published_at: string;
    checksum: string;
    checksum_rule: string;
    citation: string;
    url: string;
  };
  checksum?: string;
  checksum_rule?: string;
  citation?: string;
};

export const TIME_WINDOW_RULE =
  "from_cal_bp/to_cal_bp select a determination whose 95.4 % HPD range overlaps the window (time_mode=overlap, the default) or whose median lies in it (time_mode=median).";

export const CAUTIONS = [
  "Calibrated ages depend on the curve and its version; marine ages depend on ΔR, and Marine20 is not meant for polar waters without great care.",
  "Grades are expert judgements, not measurements.",
  "For research use; follow your field's reporting conventions.",
];

/** Determinations that share a curve (curveId) or, without one, a method (label), counted. */
export type CurveGroup = { id: number | null; label: string; count: number };

/** The curves of some groups, named and cited from the curves table, most used first. */
export function curvesOf(db: Db, groups: Iterable<CurveGroup>): CurveUse[] {
  const curveRows = db.$client.prepare("select id, display_name as name, version, citation, doi from curves").all() as {
    id: number;
    name: string;
    version: string;
    citation: string;
    doi: string | null;
  }[];
  const byId = new Map(curveRows.map((c) => [c.id, c]));
  const curves: CurveUse[] = [...groups].map((c) => {
    const row = c.id == null ? undefined : byId.get(c.id);
    return row
      ? { curve: row.name, version: row.version, citation: row.citation, doi: row.doi, count: c.count }
      : { curve: `${c.label} (normal density, no curve)`, version: null, citation: null, doi: null, count: c.count };
  });
  return curves.sort((a, b) => b.count - a.count || a.curve.localeCompare(b.curve));
}

/** Publications in the order they are listed: by citation. */
export const sortCitations = (citations: Iterable<CitationUse>): CitationUse[] =>
  [...citations].sort((a, b) => a.citation.localeCompare(b.citation));

/** Curves and publications used by some items, each with how many items use it (groups in order of first use). */
export function usageOf(
  db: Db,
  rows: readonly Pick<SelectedRow, "item" | "curveId">[],
): { curves: CurveUse[]; citations: CitationUse[] } {
  const curveCounts = new Map<string, CurveGroup>();
  const pubCounts = new Map<string, CitationUse>();
  for (const { item, curveId } of rows) {
    const key = curveId == null ? `label:${item.method}` : `id:${curveId}`;
    const c = curveCounts.get(key) ?? { id: curveId, label: item.method, count: 0 };
    c.count++;
    curveCounts.set(key, c);
    if (item.publication) {
      const pk = `${item.publication.doi ?? ""}|${item.publication.citation}`;
      const p = pubCounts.get(pk) ?? { ...item.publication, count: 0 };
      p.count++;
      pubCounts.set(pk, p);
    }
  }
  return { curves: curvesOf(db, curveCounts.values()), citations: sortCitations(pubCounts.values()) };
}

const rangesText = (ranges: ConstraintItem["hpd95"]) => ranges.map((r) => `${r.from}–${r.to} (${r.p.toFixed(3)})`).join("; ");

/** CSV columns: header name and how to read it from an item. Numbers stay numeric cells. */
export const CSV_COLUMNS: [string, (i: ConstraintItem) => CsvCell][] = [
  ["id", (i) => i.id],
  ["lab_code", (i) => i.lab_code],
  ["lab", (i) => i.lab],
  ["site_id", (i) => i.site_id],
  ["site_name", (i) => i.site_name],
  ["latitude", (i) => i.latitude],
  ["longitude", (i) => i.longitude],
  ["elevation_m", (i) => i.elevation_m],
  ["sample_code", (i) => i.sample_code],
  ["material", (i) => i.material],
  ["depth_cm", (i) => i.depth_cm],
  ["method", (i) => i.method],
  ["signal", (i) => i.signal],
  ["constraint_kind", (i) => i.constraint_kind],
  ["grade", (i) => i.grade],
  ["grade_name", (i) => i.grade_name],
  ["flags", (i) => i.flags.join(";")],
  ["worst_check", (i) => i.worst_check],
  ["c14_age", (i) => i.c14_age],
  ["c14_error", (i) => i.c14_error],
  ["f14c", (i) => i.f14c],
  ["f14c_error", (i) => i.f14c_error],
  ["d13c", (i) => i.d13c],
  ["delta_r", (i) => i.delta_r],
  ["delta_r_error", (i) => i.delta_r_error],
  ["de_gy", (i) => i.de_gy],
  ["de_error_gy", (i) => i.de_error_gy],
  ["dose_rate_gy_per_ka", (i) => i.dose_rate_gy_per_ka],
  ["dose_rate_error_gy_per_ka", (i) => i.dose_rate_error_gy_per_ka],
  ["measurement_year", (i) => i.measurement_year],
  ["calibration_curve", (i) => i.calibration_curve],
  ["median_cal_bp", (i) => i.median_cal_bp],
  ["hpd95_oldest_cal_bp", (i) => (i.hpd95.length ? Math.max(...i.hpd95.map((r) => r.from)) : null)],
  ["hpd95_youngest_cal_bp", (i) => (i.hpd95.length ? Math.min(...i.hpd95.map((r) => r.to)) : null)],
  ["hpd68", (i) => rangesText(i.hpd68)],
  ["hpd95", (i) => rangesText(i.hpd95)],
  ["publication", (i) => i.publication?.citation],
  ["doi", (i) => i.publication?.doi],
];

function* csvRows(items: Iterable<ConstraintItem>): Generator<CsvCell[]> {
  for (const item of items) yield CSV_COLUMNS.map(([, read]) => read(item));
}

export function csvDownload(items: Iterable<ConstraintItem>): ReadableStream<Uint8Array> {
  return csvStream(
    CSV_COLUMNS.map(([name]) => name),
    csvRows(items),
  );
}

/** GeoJSON properties: the CSV's columns (lists as arrays), without the coordinates. */
function geojsonProperties(item: ConstraintItem): Record<string, unknown> {
  const { latitude: _lat, longitude: _lon, ...rest } = item;
  return rest;
}

export function geojsonDownload(meta: DownloadMetadata, items: Iterable<ConstraintItem>): ReadableStream<Uint8Array> {
  function* points() {
    for (const item of items) {
      yield { id: item.id, longitude: item.longitude, latitude: item.latitude, properties: geojsonProperties(item) };
    }
  }
  return geojsonStream(meta, points());
}

/** A density ready to write: its first year and its probabilities already as JSON text (`[p0,p1,…]`). */
export type DensityOut = { start: number; text: Uint8Array };

/**
 * `{...metadata, "constraints": [...]}` written item by item. With densities, each item gets
 * `density: {start_cal_bp, step, p}`: p[i] is the probability of calendar year start_cal_bp + i·step.
 */
export function jsonDownload(
  meta: DownloadMetadata,
  items: Iterable<{ item: object; density?: DensityOut | null }>,
): ReadableStream<Uint8Array> {
  function* pieces() {
    const head = JSON.stringify(meta);
    yield `${head.slice(0, -1)},"constraints":[`;
    let first = true;
    for (const { item, density } of items) {
      const text = JSON.stringify(item);
      const lead = first ? "\n" : ",\n";
      first = false;
      if (!density) {
        yield lead + text;
        continue;
      }
      // Probabilities to 6 significant digits (Float32 holds about seven), already written as bytes
      // (density-text.server.ts): a full download holds millions of them.
      yield `${lead}${text.slice(0, -1)},"density":{"start_cal_bp":${density.start},"step":1,"p":`;
      yield density.text;
      yield "}}";
    }
    yield "\n]}\n";
  }
  return textStream(pieces());
}

export const CONTENT_TYPES: Record<Exclude<DownloadFormat, "metadata">, string> = {
  json: "application/json; charset=utf-8",
  csv: "text/csv; charset=utf-8",
  geojson: "application/geo+json; charset=utf-8",
};

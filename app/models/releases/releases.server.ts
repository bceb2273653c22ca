// Releases: a frozen, named, citable constraint set. Publishing copies every selected item into
// release_items in one transaction and names the calibration whose density it released (with the
// density's SHA-256); recalibration never deletes a calibration a release names. Nothing here ever
// updates or deletes a release or its items, so edits, regrades, recalibrations and withdrawals
// in the registry leave published releases exactly as they were.
import { createHash } from "node:crypto";
import type { Db } from "#app/db/client.server.ts";
import { CHECKSUM_RULE, releaseChecksum, roundForFreezing } from "#app/models/releases/canonical.server.ts";
import { decodeDensity } from "#app/models/calibration/calibrations.server.ts";
import { densityText, heldDensityText } from "#app/models/releases/density-text.server.ts";
import { usageOf, type CurveUse, type DensityOut } from "#app/models/releases/downloads.server.ts";
import { selectionIds } from "#app/models/registry/constraints.server.ts";
import { densitiesFor, selectionItems, type ConstraintItem, type SelectedRow } from "#app/models/releases/selection.server.ts";
import { filterRecord, type ConstraintFilter } from "#app/utils/constraint-filter.ts";

export type DensityRef = { calibration_id: number; start_cal_bp: number; step: 1; length: number; sha256: string };
export type FrozenItem = ConstraintItem & { density_ref: DensityRef | null };

export type ReleaseRow = {
  id: number;
  slug: string;
  name: string;
  version: string;
  description: string | null;
  filter: Record<string, unknown>;
  curves: CurveUse[];
  itemCount: number;
  checksum: string;
  checksumRule: string;
  citation: string;
  previousReleaseId: number | null;
  publishedAt: number;
  publishedBy: string;
};

export class PublishRefused extends Error {
  constructor(
    message: string,
    readonly field: "name" | "version" | "filter" | "description",
  ) {
    super(message);
  }
}

export function slugFor(name: string, version: string): string {
  const part = (s: string) =>
    s
      .normalize("NFKD")
      .replace(/[\u0300-\u036f]/g, "")
      .toLowerCase()
      .replace(/[^a-z0-9]+/g, "-")
      .replace(/^-+|-+$/g, "")
      .slice(0, 60);
  return `${part(name) || "release"}-v${part(version) || "1"}`;
}

export function citationText(r: {
  name: string;
  version: string;
  publishedAt: Date;
  count: number;
  checksum: string;
  url: string;
}): string {
  const year = r.publishedAt.getUTCFullYear();
  const day = r.publishedAt.toISOString().slice(0, 10);
  return (
    `Thawline contributors (${year}). ${r.name}, version ${r.version}: ${r.count.toLocaleString("en")} ice-free constraints ` +
    `[data set]. Thawline registry, published ${day}. ${r.url} (SHA-256 ${r.checksum}). ` +
    "Please also cite the source publications listed with the release."
  );
}

export type PublishInput = {
  name: string;
  version: string;
  description?: string | null;
  filter: ConstraintFilter;
  userId: number;
  constraintSetId?: number | null;
  /** Absolute URL of the release page without the slug, e.g. https://host/releases/ */
  baseUrl: string;
  now?: Date;
};

/** Publishes a release in one transaction; refuses an empty selection or a name and version already used. */
export function publishRelease(db: Db, input: PublishInput): { id: number; slug: string; checksum: string; count: number } {
  const name = input.name.trim();
  const version = input.version.trim() || "1";
  if (!name) throw new PublishRefused("Give the release a name.", "name");
  const slug = slugFor(name, version);
  const sqlite = db.$client;
  return sqlite.transaction(() => {
    const clash = sqlite
      .prepare("select slug from releases where (name = ? and version = ?) or slug = ?")
      .get(name, version, slug);
    if (clash)
      throw new PublishRefused(`A release named “${name}” version ${version} already exists; give a new version.`, "version");
    const rows = [...selectionItems(db, selectionIds(db, input.filter))];
    if (rows.length === 0) throw new PublishRefused("The filter selects no determinations; a release cannot be empty.", "filter");
    fillDensityHashes(db, rows);
    const frozen = rows.map((r) => {
      const ref: DensityRef | null = r.density
        ? {
            calibration_id: r.calibrationId,
            start_cal_bp: r.density.start,
            step: 1,
            length: r.density.length,
            sha256: r.density.sha256!,
          }
        : null;
      return {
        item: roundForFreezing({ ...r.item, density_ref: ref }) as FrozenItem,
        calibrationId: ref ? r.calibrationId : null,
      };
    });
    const checksum = releaseChecksum(frozen.map((f) => f.item));
    const now = input.now ?? new Date();
    const { curves } = usageOf(db, rows);
    const previous = sqlite
      .prepare(`select id from releases order by (name = ?) desc, published_at desc, id desc limit 1`)
      .get(name) as { id: number } | undefined;
    const filter: Record<string, unknown> = filterRecord(input.filter);
    if (input.filter.geometry) filter.geometry = input.filter.geometry;
    const citation = citationText({
      name,
      version,
      publishedAt: now,
      count: rows.length,
      checksum,
      url: `${input.baseUrl}${slug}`,
    });
    const { lastInsertRowid } = sqlite
      .prepare(
        `insert into releases (slug, name, version, description, filter, curve_versions, item_count, checksum, checksum_rule,
           citation, previous_release_id, constraint_set_id, created_by, published_at)
         values (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?)`,
      )
      .run(
        slug,
        name,
        version,
        input.description?.trim() || null,
        JSON.stringify(filter),
        JSON.stringify(curves),
        rows.length,
        checksum,
        CHECKSUM_RULE,
        citation,
        previous?.id ?? null,
        input.constraintSetId ?? null,
        input.userId,
        now.getTime(),
      );
    const releaseId = Number(lastInsertRowid);
    const insert = sqlite.prepare(
      "insert into release_items (release_id, determination_id, frozen, calibration_id) values (?, ?, ?, ?)",
    );
    for (const f of frozen) insert.run(releaseId, f.item.id, JSON.stringify(f.item), f.calibrationId);
    sqlite
      .prepare(
        "insert into audit_log (actor_id, action, entity, entity_id, after) values (?, 'release.publish', 'release', ?, ?)",
      )
      .run(input.userId, String(releaseId), JSON.stringify({ slug, name, version, count: rows.length, checksum }));
    return { id: releaseId, slug, checksum, count: rows.length };
  })();
}

/**
 * Calibrations written before density_sha256 existed get it now (read once, hashed, stored), so
 * every released density is named by its hash. Runs inside the publishing transaction.
 */
function fillDensityHashes(db: Db, rows: SelectedRow[]): void {
  const missing = rows.filter((r) => r.density && r.density.sha256 == null);
  if (missing.length === 0) return;
  const blobs = densitiesFor(
    db,
    missing.map((r) => r.calibrationId),
  );
  const store = db.$client.prepare("update calibrations set density_sha256 = ? where id = ? and density_sha256 is null");
  for (const r of missing) {
    const b = blobs.get(r.calibrationId);
    if (!b) continue;
    r.density!.sha256 = createHash("sha256").update(b.blob).digest("hex");
    store.run(r.density!.sha256, r.calibrationId);
  }
}

const RELEASE_SELECT = `select r.id, r.slug, r.name, r.version, r.description, r.filter, r.curve_versions as curves,
    r.item_count as itemCount, r.checksum, r.checksum_rule as checksumRule, r.citation,
    r.previous_release_id as previousReleaseId, r.published_at as publishedAt, u.name as publishedBy
  from releases r join users u on u.id = r.created_by`;

type RawRelease = Omit<ReleaseRow, "filter" | "curves"> & { filter: string; curves: string };
const parseRelease = (r: RawRelease): ReleaseRow => ({
  ...r,
  filter: JSON.parse(r.filter) as Record<string, unknown>,
  curves: JSON.parse(r.curves) as CurveUse[],
});

export function listReleases(db: Db): ReleaseRow[] {
  return (db.$client.prepare(`${RELEASE_SELECT} order by r.published_at desc, r.id desc`).all() as RawRelease[]).map(
    parseRelease,
  );
}

export function releaseBySlug(db: Db, slug: string): ReleaseRow | null {
  const r = db.$client.prepare(`${RELEASE_SELECT} where r.slug = ?`).get(slug) as RawRelease | undefined;
  return r ? parseRelease(r) : null;
}

export function releaseById(db: Db, id: number): ReleaseRow | null {
  const r = db.$client.prepare(`${RELEASE_SELECT} where r.id = ?`).get(id) as RawRelease | undefined;
  return r ? parseRelease(r) : null;
}

/** The frozen items of a release in id order, as the text stored at publication. */
export function releaseItemTexts(db: Db, releaseId: number): string[] {
  return (
    db.$client.prepare("select frozen from release_items where release_id = ? order by determination_id").all(releaseId) as {
      frozen: string;
    }[]
  ).map((r) => r.frozen);
}

export function releaseItems(db: Db, releaseId: number): FrozenItem[] {
  return releaseItemTexts(db, releaseId).map((t) => JSON.parse(t) as FrozenItem);
}

/**
 * The released density of each item of a release: a copy in release_items (releases published
 * before release_items.calibration_id existed) or the calibration it names, which is never
 * deleted or changed. `start` and `density` are expressions over ri (release_items) and the `join`.
 * Model-run scoring and the downloads read densities through this.
 */
export const RELEASE_DENSITY_SQL = {
  start: "coalesce(ri.density_start_cal_bp, rc.density_start_cal_bp)",
  density: "coalesce(ri.density, rc.density)",
  join: "left join calibrations rc on rc.id = ri.calibration_id",
};

/**
 * A release's frozen items with their densities as text, a few hundred at a time, in id order. A
 * density already held as text (by the SHA-256 its density_ref names) is not read again.
 */
export function* releaseItemsWithDensities(
  db: Db,
  releaseId: number,
  batch = 500,
): Generator<{ item: FrozenItem; density: DensityOut | null }> {
  const sqlite = db.$client;
  const heads = sqlite.prepare(
    `select ri.determination_id as id, ri.frozen, ${RELEASE_DENSITY_SQL.start} as start
     from release_items ri ${RELEASE_DENSITY_SQL.join}
     where ri.release_id = ? and ri.determination_id > ? order by ri.determination_id limit ?`,
  );
  const blobs = (n: number) =>
    sqlite.prepare(
      `select ri.determination_id as id, ${RELEASE_DENSITY_SQL.density} as blob
       from release_items ri ${RELEASE_DENSITY_SQL.join}
       where ri.release_id = ? and ri.determination_id in (${Array.from({ length: n }, () => "?").join(",")})`,
    );
  let after = -1;
  for (;;) {
    const rows = heads.all(releaseId, after, batch) as { id: number; frozen: string; start: number | null }[];
    if (rows.length === 0) return;
    const items = rows.map((r) => JSON.parse(r.frozen) as FrozenItem);
    const texts = items.map((item) => heldDensityText(item.density_ref?.sha256));
    const missing = rows.filter((r, k) => !texts[k] && r.start != null).map((r) => r.id);
    const read = new Map(
      missing.length === 0
        ? []
        : (blobs(missing.length).all(releaseId, ...missing) as { id: number; blob: Buffer | null }[]).map((b) => [b.id, b.blob]),
    );
    for (let k = 0; k < rows.length; k++) {
      const { id, start } = rows[k]!;
      const item = items[k]!;
      const blob = read.get(id);
      const text =
        start == null
          ? undefined
          : (texts[k] ?? (blob ? densityText(item.density_ref?.sha256, decodeDensity(blob, start).values) : undefined));
      yield { item, density: text && start != null ? { start, text } : null };
    }
    after = rows[rows.length - 1]!.id;
  }
}

/** The version a new release of this name gets when none is given: one more than the number of earlier ones. */
export function nextVersion(db: Db, name: string): string {
  const n = (db.$client.prepare("select count(*) as n from releases where name = ?").get(name.trim()) as { n: number }).n;
  let v = n + 1;
  while (db.$client.prepare("select 1 from releases where name = ? and version = ?").get(name.trim(), String(v))) v++;
  return String(v);
}

/** A release as the API lists it. */
export function releaseSummary(r: ReleaseRow, pageUrl: string) {
  return {
    slug: r.slug,
    name: r.name,
    version: r.version,
    description: r.description,
    count: r.itemCount,
    checksum: r.checksum,
    checksum_rule: r.checksumRule,
    citation: r.citation,
    published_at: new Date(r.publishedAt).toISOString(),
    filter: r.filter,
    curves: r.curves,
    url: pageUrl,
  };
}

// Finding a site already in the registry by name or by a point, for the submission form's site
// combobox. Built to stay quick with tens of thousands of sites: names that start with the text come
// from the case-insensitive name index; words inside names and points near a position fill the
// rest with bounded scans; every answer is capped.
import type { Db } from "#app/db/client.server.ts";
import { escapeLike } from "#app/utils/sql-like.ts";

export const SITE_SEARCH_LIMIT = 20;

export type SiteHit = { id: number; name: string; latitude: number; longitude: number; distanceKm: number | null };

export type SiteQuery = { q?: string; near?: { latitude: number; longitude: number }; limit?: number };

/** Great-circle distance, km (spherical Earth, mean radius 6,371 km). */
function distanceKm(a: { latitude: number; longitude: number }, b: { latitude: number; longitude: number }): number {
  const rad = Math.PI / 180;
  const dLat = (b.latitude - a.latitude) * rad;
  const dLon = (b.longitude - a.longitude) * rad;
  const h = Math.sin(dLat / 2) ** 2 + Math.cos(a.latitude * rad) * Math.cos(b.latitude * rad) * Math.sin(dLon / 2) ** 2;
  return 2 * 6371 * Math.asin(Math.min(1, Math.sqrt(h)));
}

/** "58.71, -64.35" (latitude, longitude in decimal degrees) read as a point, else null. */
export function pointFromText(text: string): { latitude: number; longitude: number } | null {
  const m = /^\s*(-?\d+(?:\.\d+)?)\s*[,;\s]\s*(-?\d+(?:\.\d+)?)\s*$/.exec(text);
  if (!m) return null;
  const latitude = Number(m[1]);
  const longitude = Number(m[2]);
  if (Math.abs(latitude) > 90 || Math.abs(longitude) > 180) return null;
  return { latitude, longitude };
}

/**
 * Up to `limit` sites: by name (starts with the text first, then a word in the name starting with
 * it, alphabetical), or nearest first around a point (within widening boxes on the lat/lon index).
 */
export function searchSites(db: Db, query: SiteQuery): SiteHit[] {
  const limit = Math.min(Math.max(1, query.limit ?? SITE_SEARCH_LIMIT), 50);
  const text = query.q?.trim() ?? "";
  const near = query.near ?? pointFromText(text);
  if (near) return nearestSites(db, near, limit);
  const select = "select id, name, latitude, longitude from sites";
  if (!text) {
    return (db.$client.prepare(`${select} order by name collate nocase limit ?`).all(limit) as Omit<SiteHit, "distanceKm">[]).map(
      (s) => ({ ...s, distanceKm: null }),
    );
  }
  const like = escapeLike(text);
  const starts = db.$client
    .prepare(`${select} where name like ? escape '\\' order by name collate nocase limit ?`)
    .all(`${like}%`, limit) as Omit<SiteHit, "distanceKm">[];
  let rows = starts;
  if (rows.length < limit) {
    const words = db.$client
      .prepare(`${select} where name like ? escape '\\' and name not like ? escape '\\' order by name collate nocase limit ?`)
      .all(`% ${like}%`, `${like}%`, limit - rows.length) as Omit<SiteHit, "distanceKm">[];
    rows = [...rows, ...words];
  }
  return rows.map((s) => ({ ...s, distanceKm: null }));
}

/** At most this many sites in a map's view; the picker says when there are more. */
const SITES_IN_VIEW_LIMIT = 500;

type Box = { south: number; west: number; north: number; east: number };

/** "south,west,north,east" in decimal degrees as a box, else null. A box across the antimeridian has west > east. */
export function boxFromText(text: string): Box | null {
  const parts = text.split(",").map((p) => Number(p.trim()));
  if (parts.length !== 4 || parts.some((p) => !Number.isFinite(p))) return null;
  const [south, west, north, east] = parts as [number, number, number, number];
  if (south > north || Math.abs(south) > 90 || Math.abs(north) > 90) return null;
  return { south, west: Math.max(-180, west), north, east: Math.min(180, east) };
}

/** The sites inside a box (a map's view), on the lat/lon index, at most `limit`; `more` when others lie there too. */
export function sitesInBox(
  db: Db,
  box: Box,
  limit = SITES_IN_VIEW_LIMIT,
): { sites: Omit<SiteHit, "distanceKm">[]; more: boolean } {
  const lonClause = box.west <= box.east ? "longitude between ? and ?" : "(longitude >= ? or longitude <= ?)";
  const rows = db.$client
    .prepare(`select id, name, latitude, longitude from sites where latitude between ? and ? and ${lonClause} limit ?`)
    .all(box.south, box.north, box.west, box.east, limit + 1) as Omit<SiteHit, "distanceKm">[];
  return { sites: rows.slice(0, limit), more: rows.length > limit };
}

function nearestSites(db: Db, point: { latitude: number; longitude: number }, limit: number): SiteHit[] {
  const stmt = db.$client.prepare(
    "select id, name, latitude, longitude from sites where latitude between ? and ? and longitude between ? and ?",
  );
  // Boxes of 0.25°, 1°, 4° and 16° of latitude until enough sites fall inside.
  for (const half of [0.25, 1, 4, 16, 180]) {
    const lonHalf = Math.min(180, half / Math.max(0.05, Math.cos((point.latitude * Math.PI) / 180)));
    const rows = stmt.all(
      point.latitude - half,
      point.latitude + half,
      point.longitude - lonHalf,
      point.longitude + lonHalf,
    ) as Omit<SiteHit, "distanceKm">[];
    if (rows.length >= limit || half === 180) {
      return rows
        .map((s) => ({ ...s, distanceKm: distanceKm(point, s) }))
        .sort((a, b) => a.distanceKm - b.distanceKm || a.id - b.id)
        .slice(0, limit);
    }
  }
  return [];
}

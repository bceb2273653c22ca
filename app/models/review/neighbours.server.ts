// The neighbours a reviewer sees beside a determination: every determination within the
// neighbours check's radius (the same radius the check uses), nearest first, with its calendar
// age, kind and grade, for the review page's small map and its table.

import type { Db } from "#app/db/client.server.ts";
import { neighbourRadiusKm } from "./check-run.server.ts";

/** More than this many neighbours are summarised by the nearest ones. */
export const SHOWN_NEIGHBOURS = 40;

export type ReviewNeighbour = {
  id: number;
  labCode: string;
  method: string;
  constraintKind: string;
  grade: number | null;
  status: string;
  siteId: number;
  siteName: string;
  latitude: number;
  longitude: number;
  km: number;
  sameSite: boolean;
  medianCalBp: number | null;
  hpd95FromBp: number | null;
  hpd95ToBp: number | null;
};

export type ReviewNeighbourhood = {
  centre: { latitude: number; longitude: number; siteName: string };
  radiusKm: number;
  /** How many determinations lie within the radius in all. */
  total: number;
  neighbours: ReviewNeighbour[];
};

function distanceKm(lat1: number, lon1: number, lat2: number, lon2: number): number {
  const r = Math.PI / 180;
  const h =
    Math.sin(((lat2 - lat1) * r) / 2) ** 2 + Math.cos(lat1 * r) * Math.cos(lat2 * r) * Math.sin(((lon2 - lon1) * r) / 2) ** 2;
  return 2 * 6371.0088 * Math.asin(Math.min(1, Math.sqrt(h)));
}

export function reviewNeighbourhood(db: Db, id: number): ReviewNeighbourhood | null {
  const at = db.$client
    .prepare(
      `select st.id as siteId, st.name as siteName, st.latitude, st.longitude from determinations d
       join samples s on s.id = d.sample_id join sites st on st.id = s.site_id where d.id = ?`,
    )
    .get(id) as { siteId: number; siteName: string; latitude: number; longitude: number } | undefined;
  if (!at) return null;
  const radiusKm = neighbourRadiusKm();
  const dLat = radiusKm / 110.574 + 0.01;
  const dLon =
    radiusKm / (111.32 * Math.max(0.05, Math.cos((Math.min(89, Math.abs(at.latitude) + dLat) * Math.PI) / 180))) + 0.01;
  const rows = db.$client
    .prepare(
      `select d.id, d.lab_code as labCode, d.method, d.constraint_kind as constraintKind, d.grade, d.status,
         st.id as siteId, st.name as siteName, st.latitude, st.longitude,
         c.median_cal_bp as medianCalBp, c.hpd95_from_bp as hpd95FromBp, c.hpd95_to_bp as hpd95ToBp
       from determinations d join samples s on s.id = d.sample_id join sites st on st.id = s.site_id
       left join calibrations c on c.determination_id = d.id and c.is_current = 1
       where d.status != 'withdrawn' and d.id != ? and st.latitude between ? and ? and st.longitude between ? and ?`,
    )
    .all(id, at.latitude - dLat, at.latitude + dLat, at.longitude - dLon, at.longitude + dLon) as Omit<
    ReviewNeighbour,
    "km" | "sameSite"
  >[];
  const near = rows
    .map((r) => ({ ...r, km: distanceKm(at.latitude, at.longitude, r.latitude, r.longitude), sameSite: r.siteId === at.siteId }))
    .filter((r) => r.km <= radiusKm)
    .sort((a, b) => a.km - b.km || a.labCode.localeCompare(b.labCode));
  return {
    centre: { latitude: at.latitude, longitude: at.longitude, siteName: at.siteName },
    radiusKm,
    total: near.length,
    neighbours: near.slice(0, SHOWN_NEIGHBOURS),
  };
}

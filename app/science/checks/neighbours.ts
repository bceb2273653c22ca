// Check 5, neighbours within a radius (default 25 km): (a) a minimum-limiting age older than a
// maximum-limiting age nearby, by the probability from both densities; (b) a date far out of
// line with its secure or usable neighbours, by a robust z-score (median and MAD). The spatial
// index (kdbush + geokdbush) is built once per run; no pairwise scan of the registry.

import KDBush from "kdbush";
import { around } from "geokdbush";
import { olderThan as probabilityOlder } from "./older.ts";
import { clearlyYounger, prob, result, saysIceFree, yr, type CheckItem, type CheckResult, type Flag } from "./types.ts";

const CHECK = "neighbours" as const;
export const DEFAULT_NEIGHBOUR_RADIUS_KM = 25;
export const KIND_WARNING = 0.5;
export const KIND_CONFLICT = 0.95;
/**
 * Robust z thresholds: 3.5 is the modified z-score cut-off of Iglewicz & Hoaglin (1993, from
 * memory) for calling a value an outlier; twice that is a conflict.
 */
export const OUTLIER_WARNING_Z = 3.5;
export const OUTLIER_CONFLICT_Z = 7;
/** Fewest reference neighbours for the out-of-line test. */
export const MIN_REFERENCE = 3;
/** MAD of a normal sample × this = its standard deviation. */
const MAD_TO_SD = 1.4826;

export interface NeighbourIndex {
  /** Other determinations within the radius (not on the same sample), nearest first, with distances (km). */
  near(item: CheckItem): { item: CheckItem; km: number }[];
  radiusKm: number;
  /** P(the minimum-limiting `young` is older than the maximum-limiting `old`), computed once per pair and run. */
  kindConflict(young: CheckItem, old: CheckItem): number;
}

export function buildNeighbourIndex(items: readonly CheckItem[], radiusKm = DEFAULT_NEIGHBOUR_RADIUS_KM): NeighbourIndex {
  const index = new KDBush(Math.max(1, items.length));
  for (const it of items) index.add(it.longitude, it.latitude);
  // An empty registry (the last determination of an area withdrawn) has nothing to index.
  if (items.length) index.finish();
  const bySite = new Map<number, number[]>();
  // Each pair is met twice, from the minimum-limiting side and from the maximum-limiting side.
  const pairs = new Map<number, Map<number, number>>();
  return {
    radiusKm,
    kindConflict(young, old) {
      let row = pairs.get(young.id);
      if (!row) pairs.set(young.id, (row = new Map()));
      let p = row.get(old.id);
      if (p === undefined) {
        p = probabilityOlder(young.calendar!.density, old.calendar!.density);
        row.set(old.id, p);
      }
      return p;
    },
    near(item) {
      let ids = bySite.get(item.siteId);
      if (!ids) {
        ids = items.length ? around(index, item.longitude, item.latitude, Infinity, radiusKm) : [];
        bySite.set(item.siteId, ids);
      }
      const out: { item: CheckItem; km: number }[] = [];
      for (const i of ids) {
        const other = items[i];
        if (other.id === item.id || other.sampleId === item.sampleId) continue;
        out.push({ item: other, km: distanceKm(item, other) });
      }
      return out;
    },
  };
}

function distanceKm(a: CheckItem, b: CheckItem): number {
  const r = Math.PI / 180;
  const dLat = (b.latitude - a.latitude) * r;
  const dLon = (b.longitude - a.longitude) * r;
  const h = Math.sin(dLat / 2) ** 2 + Math.cos(a.latitude * r) * Math.cos(b.latitude * r) * Math.sin(dLon / 2) ** 2;
  return 2 * 6371.0088 * Math.asin(Math.min(1, Math.sqrt(h)));
}

export function median(xs: readonly number[]): number {
  const s = [...xs].sort((a, b) => a - b);
  const m = s.length >> 1;
  return s.length % 2 ? s[m] : 0.5 * (s[m - 1] + s[m]);
}

export interface OutlierTest {
  z: number;
  referenceMedian: number;
  /** The spread used: max(1.4826·MAD, median of the neighbours' own σ). */
  referenceSpread: number;
  n: number;
}

/**
 * Robust z of one calendar age against reference ages: the spread is the MAD scaled to a σ,
 * floored at the neighbours' typical dating error so that a tight cluster of few dates does not
 * make every small difference an outlier; the date's own σ adds in quadrature.
 */
export function robustOutlier(
  value: { mean: number; sd: number },
  reference: readonly { mean: number; sd: number }[],
): OutlierTest {
  const m = median(reference.map((r) => r.mean));
  const mad = median(reference.map((r) => Math.abs(r.mean - m)));
  const spread = Math.max(MAD_TO_SD * mad, median(reference.map((r) => r.sd)));
  return { z: (value.mean - m) / Math.hypot(spread, value.sd), referenceMedian: m, referenceSpread: spread, n: reference.length };
}

function olderFlag(item: CheckItem): Flag | null {
  if (item.method === "luminescence") return "partial_bleaching";
  if (item.marineMaterial) return "reworked";
  if (/bulk|gyttja|sediment/i.test(item.material)) return "old_carbon";
  return "reworked";
}

export function checkNeighbours(item: CheckItem, index: NeighbourIndex): CheckResult {
  if (!item.calendar) return result(CHECK, "pass", "No calendar age to compare with neighbours.");
  const near = index.near(item).filter((n) => n.item.calendar);
  const within = `within ${index.radiusKm} km`;
  if (near.length === 0) return result(CHECK, "pass", `No dated neighbour ${within}.`, { neighbours: 0 });
  const kind = kindConflicts(item, near, index);
  const outlier = saysIceFree(item.constraintKind) ? outOfLine(item, near, within) : null;
  const candidates = [kind, outlier].filter((r): r is CheckResult => r !== null);
  const rank = { pass: 0, note: 1, warning: 2, conflict: 3 };
  const worst = candidates.sort((a, b) => rank[b.severity] - rank[a.severity])[0];
  if (worst && worst.severity !== "pass") {
    return {
      ...worst,
      details: { ...worst.details, neighbours: near.length, also: candidates.filter((c) => c !== worst).map((c) => c.message) },
    };
  }
  return result(CHECK, "pass", outlier?.message ?? `In line with the ${near.length} dated neighbours ${within}.`, {
    neighbours: near.length,
    ...(outlier?.details ?? {}),
  });
}

/** (a) Minimum-limiting older than maximum-limiting nearby: the two cannot both hold. */
function kindConflicts(item: CheckItem, near: { item: CheckItem; km: number }[], index: NeighbourIndex): CheckResult | null {
  const isMin = item.constraintKind === "minimum";
  const isMax = item.constraintKind === "maximum";
  if (!isMin && !isMax) return null;
  const opposite = near.filter((n) => n.item.constraintKind === (isMin ? "maximum" : "minimum"));
  if (opposite.length === 0) return null;
  let worst = { p: 0, other: opposite[0] };
  for (const o of opposite) {
    const [young, old] = isMin ? [item, o.item] : [o.item, item];
    if (clearlyYounger(young.calendar!, old.calendar!)) continue;
    const p = index.kindConflict(young, old);
    if (p > worst.p) worst = { p, other: o };
  }
  const other = worst.other.item;
  const details = {
    pKindConflict: worst.p,
    otherLabCode: other.labCode,
    otherDeterminationId: other.id,
    otherKm: worst.other.km,
  };
  if (worst.p < KIND_WARNING) return result(CHECK, "pass", "", details);
  const text = isMin
    ? `P(this minimum-limiting age is older than the maximum-limiting ${other.labCode}, ${worst.other.km.toFixed(1)} km away) = ${prob(worst.p)}: the ice cannot have left before it arrived`
    : `P(the minimum-limiting ${other.labCode}, ${worst.other.km.toFixed(1)} km away, is older than this maximum-limiting age) = ${prob(worst.p)}`;
  // A maximum-limiting date is expected to be older than deglaciation; the minimum-limiting
  // partner carries the warning, this one only a note.
  if (isMax) return result(CHECK, "note", `${text}; the warning is on ${other.labCode}.`, details);
  return result(CHECK, worst.p >= KIND_CONFLICT ? "conflict" : "warning", `${text}.`, details, olderFlag(item));
}

/** (b) Out of line with the secure or usable ice-free neighbours (all ungraded ones when too few are graded). */
function outOfLine(item: CheckItem, near: { item: CheckItem; km: number }[], within: string): CheckResult | null {
  const iceFree = near.filter((n) => saysIceFree(n.item.constraintKind));
  let reference = iceFree.filter((n) => n.item.grade !== null && n.item.grade >= 2);
  let basis = "secure or usable";
  if (reference.length < MIN_REFERENCE) {
    reference = iceFree.filter((n) => n.item.grade === null || n.item.grade >= 2);
    basis = "ungraded or usable";
  }
  if (reference.length < MIN_REFERENCE) return null;
  const self = { mean: item.calendar!.meanCalBp, sd: item.calendar!.sdYears };
  const t = robustOutlier(
    self,
    reference.map((r) => ({ mean: r.item.calendar!.meanCalBp, sd: r.item.calendar!.sdYears })),
  );
  const details = {
    z: t.z,
    referenceMedianCalBp: t.referenceMedian,
    referenceSpreadYr: t.referenceSpread,
    referenceCount: t.n,
    referenceBasis: basis,
  };
  const diff = self.mean - t.referenceMedian;
  const described = `${yr(Math.abs(diff))} yr ${diff > 0 ? "older" : "younger"} than the median of ${t.n} ${basis} ice-free neighbours ${within} (${yr(t.referenceMedian)} cal BP, robust spread ± ${yr(t.referenceSpread)}; z = ${t.z.toFixed(1)})`;
  const az = Math.abs(t.z);
  if (az < OUTLIER_WARNING_Z) return result(CHECK, "pass", `In line with its neighbours: ${described}.`, details);
  const flag = diff > 0 ? olderFlag(item) : item.method === "radiocarbon" ? "young_carbon" : null;
  return result(CHECK, az >= OUTLIER_CONFLICT_Z ? "conflict" : "warning", `Out of line: ${described}.`, details, flag);
}

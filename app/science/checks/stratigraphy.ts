// Check 4, stratigraphic order: at a site, for every pair of dated levels in its column, the
// probability that the deeper is younger than the shallower, from the two calendar densities
// (taken as independent). Warning at ≥ 0.5, conflict at ≥ 0.95.

import { olderThan as probabilityOlder } from "./older.ts";
import { clearlyYounger, prob, result, type CheckItem, type CheckResult } from "./types.ts";

const CHECK = "stratigraphy" as const;
export const STRAT_WARNING = 0.5;
export const STRAT_CONFLICT = 0.95;

/**
 * +1 when a lies deeper than b, −1 when shallower, 0 when the column cannot tell. Units in
 * different positions of the column decide first (the unit is the stratigraphic reading of the
 * section); depth decides within one unit, or when a unit's position is not given.
 */
export function deeperThan(a: CheckItem, b: CheckItem): number {
  if (a.stratOrder !== null && b.stratOrder !== null && a.stratOrder !== b.stratOrder)
    return a.stratOrder > b.stratOrder ? 1 : -1;
  if (a.depthCm !== null && b.depthCm !== null && a.depthCm !== b.depthCm) return a.depthCm > b.depthCm ? 1 : -1;
  return 0;
}

interface Inversion {
  other: CheckItem;
  /** P(the deeper of the two is younger). */
  p: number;
  selfDeeper: boolean;
}

/** For each determination at one site: every pair of its column with the probability of inversion. */
export function siteInversions(siteItems: readonly CheckItem[]): Map<number, Inversion[]> {
  const out = new Map<number, Inversion[]>();
  const dated = siteItems.filter((i) => i.calendar);
  for (const it of dated) out.set(it.id, []);
  for (let i = 0; i < dated.length; i++) {
    for (let j = i + 1; j < dated.length; j++) {
      const a = dated[i];
      const b = dated[j];
      const order = deeperThan(a, b);
      if (order === 0) continue;
      const [deep, shallow] = order > 0 ? [a, b] : [b, a];
      const p = clearlyYounger(shallow.calendar!, deep.calendar!)
        ? 0
        : probabilityOlder(shallow.calendar!.density, deep.calendar!.density);
      out.get(a.id)!.push({ other: b, p, selfDeeper: order > 0 });
      out.get(b.id)!.push({ other: a, p, selfDeeper: order < 0 });
    }
  }
  return out;
}

function level(it: CheckItem): string {
  const where = it.depthCm !== null ? `${it.depthCm} cm` : `unit ${it.stratOrder}`;
  return `${it.labCode} (${where}${it.stratUnit ? `, ${it.stratUnit}` : ""})`;
}

/**
 * `suspect` may say whether a determination is out of line by evidence independent of the
 * column (its neighbours, the reconstruction): of an inverted pair, the suspect one is the
 * likelier culprit, and the other gets a note instead of a warning.
 */
export function checkStratigraphy(
  item: CheckItem,
  inversions: Map<number, Inversion[]>,
  suspect: (item: CheckItem) => boolean = () => false,
): CheckResult {
  if (!item.calendar) return result(CHECK, "pass", "No calendar age to place in the column.");
  const mine = inversions.get(item.id) ?? [];
  if (mine.length === 0) return result(CHECK, "pass", "No other dated level at this site to compare with.");
  const count = (id: number) => (inversions.get(id) ?? []).filter((x) => x.p >= STRAT_WARNING).length;
  const worst = mine.reduce((w, x) => (x.p > w.p ? x : w));
  const details = {
    pairs: mine.map((x) => ({
      labCode: x.other.labCode,
      determinationId: x.other.id,
      pDeeperYounger: x.p,
      selfDeeper: x.selfDeeper,
    })),
    worstP: worst.p,
  };
  if (worst.p < STRAT_WARNING) {
    return result(
      CHECK,
      "pass",
      `In order with the ${mine.length} other dated level${mine.length > 1 ? "s" : ""} at the site (largest P(deeper younger) = ${prob(worst.p)}).`,
      details,
    );
  }
  const relation = worst.selfDeeper ? `lies below ${level(worst.other)}` : `lies above ${level(worst.other)}`;
  const sentence = `This date ${relation}, yet P(deeper younger than shallower) = ${prob(worst.p)}`;
  // When the partner is out of order with more levels than this one, it is the likelier culprit.
  const mineCount = count(item.id);
  const theirs = count(worst.other.id);
  if (theirs > mineCount) {
    return result(
      CHECK,
      "note",
      `${sentence}; ${worst.other.labCode} is out of order with ${theirs} levels, this one with ${mineCount}.`,
      {
        ...details,
        likelierCulprit: worst.other.labCode,
      },
    );
  }
  if (suspect(worst.other) && !suspect(item)) {
    return result(
      CHECK,
      "note",
      `${sentence}; ${worst.other.labCode} is also out of line with its neighbours or the reconstruction, this one is not.`,
      {
        ...details,
        likelierCulprit: worst.other.labCode,
      },
    );
  }
  // Within one unit, samples a few decimetres apart date nearly the same event: depth order there
  // is informative only when the ages are clearly resolved, so the levels step down by one.
  const sameUnit = item.stratOrder !== null && item.stratOrder === worst.other.stratOrder;
  if (sameUnit) {
    if (worst.p >= STRAT_CONFLICT)
      return result(CHECK, "warning", `${sentence}, within one unit.`, { ...details, sameUnit }, "weak_stratigraphy");
    return result(CHECK, "note", `${sentence}, within one unit, where samples overlap in age.`, { ...details, sameUnit });
  }
  const severity = worst.p >= STRAT_CONFLICT ? "conflict" : "warning";
  return result(CHECK, severity, `${sentence}.`, details, "weak_stratigraphy");
}

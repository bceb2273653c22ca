// All seven checks over a set of determinations, with the shared indexes built once per run.

import { checkDuplicates, buildDuplicateIndex } from "./duplicates.ts";
import { checkMarine } from "./marine.ts";
import { buildNeighbourIndex, checkNeighbours, DEFAULT_NEIGHBOUR_RADIUS_KM } from "./neighbours.ts";
import { checkReconstruction, localDeglaciation, type LocalDeglaciation, type Reconstruction } from "./reconstruction.ts";
import { checkReplicates, replicateGroups } from "./replicates.ts";
import { checkStratigraphy, siteInversions } from "./stratigraphy.ts";
import type { CheckItem, CheckResult } from "./types.ts";
import { checkValueRange } from "./value-range.ts";

export interface RunOptions {
  radiusKm?: number;
  reconstruction?: Reconstruction | null;
  /** Every lab code in the registry, when `items` is only part of it. Defaults to the items' own. */
  allCodes?: readonly { id: number; labCode: string }[];
  /** Only these determinations get results; the others serve as context. Defaults to all items. */
  targets?: ReadonlySet<number>;
}

export function runChecks(items: readonly CheckItem[], options: RunOptions = {}): Map<number, CheckResult[]> {
  const targets = options.targets;
  const wanted = targets ? items.filter((i) => targets.has(i.id)) : items;
  const check = prepareChecks(items, options);
  const out = new Map<number, CheckResult[]>();
  for (const it of wanted) out.set(it.id, check(it));
  return out;
}

/**
 * Builds the shared indexes over `items` once and returns the function that checks one of them,
 * so a background run can work through the registry in chunks.
 */
export function prepareChecks(
  items: readonly CheckItem[],
  options: Omit<RunOptions, "targets"> = {},
): (it: CheckItem) => CheckResult[] {
  const neighbours = buildNeighbourIndex(items, options.radiusKm ?? DEFAULT_NEIGHBOUR_RADIUS_KM);
  const duplicates = buildDuplicateIndex(items, options.allCodes ?? items);
  const replicates = replicateGroups(items);
  const bySite = new Map<number, CheckItem[]>();
  for (const it of items) {
    const list = bySite.get(it.siteId);
    if (list) list.push(it);
    else bySite.set(it.siteId, [it]);
  }
  const inversions = new Map<number, ReturnType<typeof siteInversions>>();
  const recon = options.reconstruction ?? null;
  const localBySite = new Map<number, LocalDeglaciation>();
  const local = (it: CheckItem) => {
    let l = localBySite.get(it.siteId);
    if (!l) {
      l = localDeglaciation(recon!, it.longitude, it.latitude);
      localBySite.set(it.siteId, l);
    }
    return l;
  };
  const independent = new Map<number, CheckResult[]>();
  const independentOf = (it: CheckItem) => {
    let r = independent.get(it.id);
    if (!r) {
      r = [checkNeighbours(it, neighbours), checkReconstruction(it, recon, local)];
      independent.set(it.id, r);
    }
    return r;
  };
  const suspect = (it: CheckItem) => independentOf(it).some((r) => r.severity === "warning" || r.severity === "conflict");
  return (it: CheckItem) => {
    let inv = inversions.get(it.siteId);
    if (!inv) {
      inv = siteInversions(bySite.get(it.siteId) ?? [it]);
      inversions.set(it.siteId, inv);
    }
    return [
      checkValueRange(it),
      checkMarine(it),
      checkReplicates(it, replicates.get(it.id)),
      checkStratigraphy(it, inv, suspect),
      ...independentOf(it),
      checkDuplicates(it, duplicates),
    ];
  };
}

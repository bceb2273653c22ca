// What changed from one release to the next: determinations added, removed, regraded and
// recalibrated (median, ranges or curve changed), read from both releases' frozen items.
import type { Db } from "#app/db/client.server.ts";
import { releaseItems, type FrozenItem } from "#app/models/releases/releases.server.ts";

export type DiffEntry = { id: number; lab_code: string; site_name: string };
export type RegradedEntry = DiffEntry & { from: number | null; to: number | null };
export type RecalibratedEntry = DiffEntry & {
  from_median: number;
  to_median: number;
  from_curve: string;
  to_curve: string;
};

export type ReleaseDiff = {
  added: DiffEntry[];
  removed: DiffEntry[];
  regraded: RegradedEntry[];
  recalibrated: RecalibratedEntry[];
  unchanged: number;
};

const entry = (i: FrozenItem): DiffEntry => ({ id: i.id, lab_code: i.lab_code, site_name: i.site_name });

function calibrationChanged(a: FrozenItem, b: FrozenItem): boolean {
  return (
    a.median_cal_bp !== b.median_cal_bp ||
    a.calibration_curve !== b.calibration_curve ||
    JSON.stringify(a.hpd95) !== JSON.stringify(b.hpd95) ||
    JSON.stringify(a.hpd68) !== JSON.stringify(b.hpd68)
  );
}

/** The difference of `next` from `previous` (both lists of frozen items). */
export function diffItems(previous: readonly FrozenItem[], next: readonly FrozenItem[]): ReleaseDiff {
  const before = new Map(previous.map((i) => [i.id, i]));
  const after = new Map(next.map((i) => [i.id, i]));
  const diff: ReleaseDiff = { added: [], removed: [], regraded: [], recalibrated: [], unchanged: 0 };
  for (const item of next) {
    const old = before.get(item.id);
    if (!old) {
      diff.added.push(entry(item));
      continue;
    }
    let changed = false;
    if (old.grade !== item.grade) {
      diff.regraded.push({ ...entry(item), from: old.grade, to: item.grade });
      changed = true;
    }
    if (calibrationChanged(old, item)) {
      diff.recalibrated.push({
        ...entry(item),
        from_median: old.median_cal_bp,
        to_median: item.median_cal_bp,
        from_curve: old.calibration_curve,
        to_curve: item.calibration_curve,
      });
      changed = true;
    }
    if (!changed) diff.unchanged++;
  }
  for (const item of previous) if (!after.has(item.id)) diff.removed.push(entry(item));
  return diff;
}

export function releaseDiff(db: Db, previousId: number, nextId: number): ReleaseDiff {
  return diffItems(releaseItems(db, previousId), releaseItems(db, nextId));
}

// Runs the seven checks and stores their results: for some determinations (after a commit, an
// edit, a recalibration) or for the whole registry (a background job, the seed). Each run
// replaces the results of the determinations it covers in one transaction.

import KDBush from "kdbush";
import { around as within } from "geokdbush";
import type { Db } from "#app/db/client.server.ts";
import { CHECK_SEVERITIES, type CheckSeverity } from "#app/db/schema.ts";
import { env } from "#app/utils/env.server.ts";
import { normaliseLabCode } from "#app/science/checks/duplicates.ts";
import { runChecks } from "#app/science/checks/run.ts";
import type { CheckItem, CheckResult } from "#app/science/checks/types.ts";
import { loadAllLabCodes, loadCheckItems, loadCheckItemsById, loadCheckReconstruction } from "./check-items.server.ts";

export interface CheckRunSummary {
  determinations: number;
  bySeverity: Record<string, number>;
}

export function neighbourRadiusKm(): number {
  return env().CHECK_NEIGHBOUR_RADIUS_KM;
}

/** Replaces the stored results of the given determinations; runs in the caller's transaction if any. */
export function storeCheckResults(db: Db, results: Map<number, CheckResult[]>): CheckRunSummary {
  const sqlite = db.$client;
  const del = sqlite.prepare("delete from check_results where determination_id = ?");
  const ins = sqlite.prepare(
    'insert into check_results (determination_id, "check", severity, message, details, suggested_flag) values (?, ?, ?, ?, ?, ?)',
  );
  const bySeverity: Record<string, number> = { pass: 0, note: 0, warning: 0, conflict: 0 };
  const write = () => {
    for (const [id, list] of results) {
      del.run(id);
      for (const r of list) {
        ins.run(id, r.check, r.severity, r.message, JSON.stringify(r.details), r.suggestedFlag);
        bySeverity[r.severity]++;
      }
    }
  };
  if (sqlite.inTransaction) write();
  // Immediate: a transaction that reads before it writes fails outright if another connection wrote meanwhile.
  else sqlite.transaction(write).immediate();
  return { determinations: results.size, bySeverity };
}

/** Computes every determination's checks (no writing). */
export function computeAllChecks(db: Db): Map<number, CheckResult[]> {
  const items = loadCheckItems(db);
  return runChecks(items, { radiusKm: neighbourRadiusKm(), reconstruction: loadCheckReconstruction(db) });
}

export function runAllChecks(db: Db): CheckRunSummary {
  return storeCheckResults(db, computeAllChecks(db));
}

const KM_PER_DEG_LAT = 110.574;

/** Bounds `km` around every item. */
function around(items: readonly { latitude: number; longitude: number }[], km: number) {
  let south = Infinity;
  let north = -Infinity;
  let west = Infinity;
  let east = -Infinity;
  let maxAbsLat = 0;
  for (const it of items) {
    south = Math.min(south, it.latitude);
    north = Math.max(north, it.latitude);
    west = Math.min(west, it.longitude);
    east = Math.max(east, it.longitude);
    maxAbsLat = Math.max(maxAbsLat, Math.abs(it.latitude));
  }
  const dLat = km / KM_PER_DEG_LAT;
  const dLon = km / (111.32 * Math.max(0.05, Math.cos((Math.min(89, maxAbsLat + dLat) * Math.PI) / 180)));
  return { south: south - dLat, north: north + dLat, west: west - dLon, east: east + dLon };
}

/** A determination that has left the registry (withdrawn or deleted): where it was and its lab code. */
export type RemovedDetermination = { latitude: number; longitude: number; labCode: string };

/**
 * Checks the given determinations and every determination whose results they can change: those
 * within the neighbour radius (which includes the same site and sample) and those sharing a
 * normalised lab code. `removed` are determinations already gone (an undone upload): their
 * neighbours and lab-code twins are rechecked the same way. Context is loaded from twice the
 * radius around each place, so every rechecked determination sees all of its own neighbours.
 * Runs in the caller's transaction when there is one.
 */
export function runChecksFor(db: Db, ids: readonly number[], removed: readonly RemovedDetermination[] = []): CheckRunSummary {
  const seeds = loadCheckItemsById(db, ids);
  // Withdrawn determinations lose their results; the neighbours they leave behind are rechecked.
  const seen = new Set(seeds.map((s) => s.id));
  const withdrawn = ids.filter((id) => !seen.has(id));
  const sqlite = db.$client;
  const gone: RemovedDetermination[] = [...removed];
  if (withdrawn.length) {
    const del = sqlite.prepare("delete from check_results where determination_id = ?");
    for (const id of withdrawn) del.run(id);
    gone.push(
      ...(sqlite
        .prepare(
          `select st.latitude, st.longitude, d.lab_code as labCode from determinations d join samples s on s.id = d.sample_id
           join sites st on st.id = s.site_id where d.id in (${withdrawn.map(() => "?").join(",")})`,
        )
        .all(...withdrawn) as RemovedDetermination[]),
    );
  }
  const places = [...seeds, ...gone];
  if (places.length === 0) return { determinations: 0, bySeverity: {} };
  const r = neighbourRadiusKm();
  const codes = loadAllLabCodes(db);
  // Lab-code twins anywhere in the registry: rechecked with their own surroundings as context.
  const wantedCodes = new Set(places.map((p) => normaliseLabCode(p.labCode)));
  const twinIds = codes.filter((c) => wantedCodes.has(normaliseLabCode(c.labCode)) && !seen.has(c.id)).map((c) => c.id);
  const twins = loadCheckItemsById(db, twinIds);
  // Distances to the nearest place, great-circle as the neighbour check measures them: a bounding box
  // around places spread over a region would take in (and recheck) most of the registry.
  const placeIndex = new KDBush(places.length);
  for (const p of places) placeIndex.add(p.longitude, p.latitude);
  placeIndex.finish();
  const nearAPlace = (it: CheckItem, km: number) => within(placeIndex, it.longitude, it.latitude, 1, km).length > 0;
  const context = new Map<number, CheckItem>();
  for (const it of loadCheckItems(db, around(places, 2 * r + 1))) if (nearAPlace(it, 2 * r + 1)) context.set(it.id, it);
  const targets = new Set<number>(seeds.map((s) => s.id));
  const isNear = (it: CheckItem) => nearAPlace(it, r + 0.5);
  for (const it of context.values()) if (isNear(it)) targets.add(it.id);
  for (const twin of twins) {
    targets.add(twin.id);
    if (isNear(twin)) continue;
    for (const it of loadCheckItems(db, around([twin], r + 1))) context.set(it.id, it);
  }
  const results = runChecks([...context.values()], {
    radiusKm: r,
    reconstruction: loadCheckReconstruction(db),
    allCodes: codes,
    targets,
  });
  return storeCheckResults(db, results);
}

/** How many determinations (not withdrawn) have each worst check result. */
export function checkSummary(db: Db): { determinations: number; worst: Partial<Record<CheckSeverity, number>> } {
  const rows = db.$client
    .prepare(
      `select w, count(*) as n from (
         select max(case c.severity when 'conflict' then 3 when 'warning' then 2 when 'note' then 1 else 0 end) as w
         from check_results c join determinations d on d.id = c.determination_id
         where d.status != 'withdrawn' group by c.determination_id)
       group by w`,
    )
    .all() as { w: number; n: number }[];
  const worst: Partial<Record<CheckSeverity, number>> = {};
  for (const r of rows) worst[CHECK_SEVERITIES[r.w]!] = r.n;
  return { determinations: rows.reduce((a, r) => a + r.n, 0), worst };
}

// The constraints a run is scored against: a release's determinations (by slug) when one is
// chosen, otherwise a filter of the live registry (default: every determination graded 2 or 3),
// each with its site and its calendar density: a release's as frozen at publication, the live
// registry's current one otherwise.

import type { Db } from "#app/db/client.server.ts";
import { RELEASE_DENSITY_SQL } from "#app/models/releases/releases.server.ts";
import type { ScoredKind } from "#app/science/scoring/constraint-score.ts";
import type { ScoringConstraint } from "./score-run.server.ts";

export interface ConstraintChoice {
  releaseSlug?: string | null;
  /** Grades let in when no release is chosen; default [2, 3]. */
  grades?: number[];
}

export const DEFAULT_GRADES = [2, 3];

export interface ConstraintSet {
  constraints: ScoringConstraint[];
  releaseId: number | null;
  filter: Record<string, unknown> | null;
  label: string;
}

interface Row {
  id: number;
  latitude: number;
  longitude: number;
  kind: ScoredKind;
  grade: number | null;
  start: number;
  density: Buffer;
}

const SELECT = `
  select d.id, s.latitude, s.longitude, d.constraint_kind as kind, d.grade, c.density_start_cal_bp as start, c.density
  from determinations d
  join samples sa on sa.id = d.sample_id
  join sites s on s.id = sa.site_id
  join calibrations c on c.determination_id = d.id and c.is_current = 1
  where c.density is not null and d.status != 'withdrawn'`;

function toConstraint(r: Row): ScoringConstraint {
  const bytes = new Uint8Array(r.density).slice(); // own, aligned copy
  return {
    determinationId: r.id,
    latitude: r.latitude,
    longitude: r.longitude,
    kind: r.kind,
    grade: r.grade,
    density: { startCalBp: r.start, values: new Float32Array(bytes.buffer, 0, bytes.byteLength >> 2) },
  };
}

export class UnknownReleaseError extends Error {}

export function loadConstraints(db: Db, choice: ConstraintChoice = {}): ConstraintSet {
  const sqlite = db.$client;
  if (choice.releaseSlug) {
    const release = sqlite.prepare("select id, name from releases where slug = ?").get(choice.releaseSlug) as
      { id: number; name: string } | undefined;
    if (!release) throw new UnknownReleaseError(`No release "${choice.releaseSlug}".`);
    // A release is scored as it was published: the frozen item (site position, kind, grade) and the
    // released density (a copy in release_items for older releases, else the calibration the item
    // names, which is never deleted), whatever the registry has done since.
    const rows = sqlite
      .prepare(
        `select ri.determination_id as id, json_extract(ri.frozen, '$.latitude') as latitude,
                json_extract(ri.frozen, '$.longitude') as longitude, json_extract(ri.frozen, '$.constraint_kind') as kind,
                json_extract(ri.frozen, '$.grade') as grade, ${RELEASE_DENSITY_SQL.start} as start,
                ${RELEASE_DENSITY_SQL.density} as density
         from release_items ri ${RELEASE_DENSITY_SQL.join}
         where ri.release_id = ? and ${RELEASE_DENSITY_SQL.density} is not null
           and coalesce(json_extract(ri.frozen, '$.grade'), -1) != 0
         order by ri.determination_id`,
      )
      .all(release.id) as Row[];
    return { constraints: rows.map(toConstraint), releaseId: release.id, filter: null, label: `release ${choice.releaseSlug}` };
  }
  const grades = (choice.grades ?? DEFAULT_GRADES).filter((g) => g > 0);
  const rows = sqlite
    .prepare(`${SELECT} and d.grade in (${grades.map(() => "?").join(",")}) order by d.id`)
    .all(...grades) as Row[];
  return {
    constraints: rows.map(toConstraint),
    releaseId: null,
    filter: { grades },
    label: `every determination graded ${grades.join(" or ")}`,
  };
}

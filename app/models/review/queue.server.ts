// The review queue: what awaits a reviewer (never their own submissions), with counts, filters,
// the two sorts, and leases so two reviewers do not grade one determination at once.

import { rankWord } from "#app/utils/check-rank.ts";
import { z } from "zod";
import type { Db } from "#app/db/client.server.ts";
import { CHECK_SEVERITIES, METHODS } from "#app/db/schema.ts";
import { WORST_CHECK_RANK_SQL } from "#app/models/registry/query.server.ts";

/** How long a taken item stays with its reviewer. */
export const LEASE_MS = 30 * 60 * 1000;
export const QUEUE_PAGE_SIZE = 100;

const blank = (v: unknown) => (typeof v === "string" && v.trim() === "" ? undefined : v);
export const queueFiltersSchema = z.object({
  region: z.preprocess(blank, z.string().max(100).optional()),
  lab: z.preprocess(blank, z.coerce.number().int().positive().optional()),
  method: z.preprocess(blank, z.enum(METHODS).optional()),
  material: z.preprocess(blank, z.string().max(100).optional()),
  worst: z.preprocess(blank, z.enum(CHECK_SEVERITIES).optional()),
  contributor: z.preprocess(blank, z.coerce.number().int().positive().optional()),
  batch: z.preprocess(blank, z.coerce.number().int().positive().optional()),
  sort: z.preprocess(blank, z.enum(["oldest", "worst"]).default("oldest")),
});
export type QueueFilters = z.infer<typeof queueFiltersSchema>;

export function parseQueueFilters(params: URLSearchParams): QueueFilters {
  const raw = Object.fromEntries(params);
  const strict = queueFiltersSchema.safeParse(raw);
  if (strict.success) return strict.data;
  for (const i of strict.error.issues) delete raw[String(i.path[0])];
  return queueFiltersSchema.parse(raw);
}

export type QueueRow = {
  id: number;
  labCode: string;
  siteName: string;
  region: string | null;
  material: string;
  method: string;
  labName: string;
  contributorName: string | null;
  status: string;
  createdAt: number;
  worstRank: number | null;
  medianCalBp: number | null;
  leasedBy: string | null;
  leasedByMe: boolean;
};

function where(f: QueueFilters, reviewerId: number) {
  const parts = ["d.status in ('submitted', 'in_review')", "coalesce(d.contributor_id, -1) != ?"];
  const params: unknown[] = [reviewerId];
  const add = (sql: string, v: unknown) => {
    parts.push(sql);
    params.push(v);
  };
  if (f.region) add("t.region = ?", f.region);
  if (f.lab) add("d.lab_id = ?", f.lab);
  if (f.method) add("d.method = ?", f.method);
  if (f.material) add("s.material = ?", f.material);
  if (f.worst) add(`${WORST_CHECK_RANK_SQL} = ?`, CHECK_SEVERITIES.indexOf(f.worst));
  if (f.contributor) add("d.contributor_id = ?", f.contributor);
  if (f.batch) add("d.upload_batch_id = ?", f.batch);
  return { sql: parts.join(" and "), params };
}

const FROM = `from determinations d join samples s on s.id = d.sample_id join sites t on t.id = s.site_id join labs l on l.id = d.lab_id`;

export function listQueue(db: Db, f: QueueFilters, reviewerId: number) {
  const w = where(f, reviewerId);
  const order =
    f.sort === "worst" ? `coalesce(${WORST_CHECK_RANK_SQL}, -1) desc, d.created_at asc, d.id` : "d.created_at asc, d.id";
  const now = Date.now();
  const rows = db.$client
    .prepare(
      `select d.id, d.lab_code as labCode, t.name as siteName, t.region, s.material, d.method, l.name as labName,
         u.name as contributorName, d.status, d.created_at as createdAt, ${WORST_CHECK_RANK_SQL} as worstRank,
         c.median_cal_bp as medianCalBp, lu.name as leasedBy, (rl.reviewer_id = ?) as leasedByMe
       ${FROM}
       left join users u on u.id = d.contributor_id
       left join calibrations c on c.determination_id = d.id and c.is_current = 1
       left join review_leases rl on rl.determination_id = d.id and rl.expires_at > ?
       left join users lu on lu.id = rl.reviewer_id
       where ${w.sql} order by ${order} limit ?`,
    )
    .all(reviewerId, now, ...w.params, QUEUE_PAGE_SIZE) as (Omit<QueueRow, "leasedByMe"> & { leasedByMe: number | null })[];
  const total = db.$client
    .prepare(`select count(*) ${FROM} where ${w.sql}`)
    .pluck()
    .get(...w.params) as number;
  const byWorst = db.$client
    .prepare(`select ${WORST_CHECK_RANK_SQL} as r, count(*) as n ${FROM} where ${w.sql} group by r`)
    .all(...w.params) as { r: number | null; n: number }[];
  const awaitingAnswer = db.$client
    .prepare("select count(*) from determinations where status = 'awaiting_answer'")
    .pluck()
    .get() as number;
  return {
    rows: rows.map((r) => ({ ...r, leasedByMe: r.leasedByMe === 1 })),
    total,
    counts: Object.fromEntries(byWorst.map((b) => [rankWord(b.r) ?? "unchecked", b.n])) as Record<string, number>,
    awaitingAnswer,
  };
}

export function queueFilterOptions(db: Db) {
  const q = <T>(sql: string) => db.$client.prepare(sql).all() as T[];
  return {
    regions: q<{ region: string }>("select distinct region from sites where region is not null order by region").map(
      (r) => r.region,
    ),
    labs: q<{ id: number; name: string }>("select id, name from labs order by name"),
    materials: q<{ name: string }>("select name from materials order by name").map((m) => m.name),
    contributors: q<{ id: number; name: string }>(
      "select distinct u.id, u.name from users u join determinations d on d.contributor_id = u.id order by u.name",
    ),
    batches: q<{ id: number; fileName: string }>(
      "select id, file_name as fileName from upload_batches where status = 'committed' order by id desc limit 200",
    ),
  };
}

/** Takes an item for this reviewer (or renews the hold); false when another reviewer holds it. */
export function takeItem(db: Db, id: number, reviewerId: number): boolean {
  const now = Date.now();
  const r = db.$client
    .prepare(
      `insert into review_leases (determination_id, reviewer_id, expires_at) values (?, ?, ?)
       on conflict(determination_id) do update set reviewer_id = excluded.reviewer_id, expires_at = excluded.expires_at
       where review_leases.reviewer_id = excluded.reviewer_id or review_leases.expires_at <= ?`,
    )
    .run(id, reviewerId, now + LEASE_MS, now);
  return r.changes > 0;
}

export function releaseItem(db: Db, id: number, reviewerId: number): void {
  db.$client.prepare("delete from review_leases where determination_id = ? and reviewer_id = ?").run(id, reviewerId);
}

/** The next item in the queue after this one (oldest first), for keyboard navigation. */
export function nextInQueue(db: Db, afterId: number, reviewerId: number): number | null {
  const w = where(queueFiltersSchema.parse({}), reviewerId);
  return (db.$client
    .prepare(
      `select d.id ${FROM} where ${w.sql} and d.id != ? and not exists (select 1 from review_leases rl where rl.determination_id = d.id and rl.expires_at > ? and rl.reviewer_id != ?)
       order by d.created_at asc, d.id limit 1`,
    )
    .pluck()
    .get(...w.params, afterId, Date.now(), reviewerId) ?? null) as number | null;
}

/** Who holds this determination's lease now, if anyone. */
export function currentLease(db: Db, id: number): { name: string; reviewerId: number; expiresAt: number } | null {
  return (
    (db.$client
      .prepare(
        "select u.name, l.reviewer_id as reviewerId, l.expires_at as expiresAt from review_leases l join users u on u.id = l.reviewer_id where l.determination_id = ? and l.expires_at > ?",
      )
      .get(id, Date.now()) as { name: string; reviewerId: number; expiresAt: number } | undefined) ?? null
  );
}

// The contributor's own list of determinations, filtered and paged, and whether each may still be edited.

import type { Db } from "#app/db/client.server.ts";
import type { Method, Status } from "#app/db/schema.ts";
import { editableStatus } from "#app/models/submission/form/write.server.ts";
import { LISTED_MEASUREMENT_SQL, type ListedMeasurement } from "#app/models/registry/query.server.ts";
import { escapeLike } from "#app/utils/sql-like.ts";

export const SUBMISSIONS_PAGE_SIZE = 50;

export type SubmissionFilters = { status?: Status; method?: Method; q?: string; page: number };

export type SubmissionListRow = {
  id: number;
  labCode: string;
  method: Method;
  signal: string | null;
  status: Status;
  grade: number | null;
  version: number;
  siteId: number;
  siteName: string;
  fieldCode: string;
  material: string;
} & ListedMeasurement & {
    medianCalBp: number | null;
    calibrationError: string | null;
    createdAt: number;
    updatedAt: number;
  };

/** One page of the contributor's own determinations, newest first, with counts per status (three statements). */
export function listSubmissions(db: Db, userId: number, filters: SubmissionFilters) {
  const where = ["d.contributor_id = ?"];
  const params: unknown[] = [userId];
  if (filters.status) {
    where.push("d.status = ?");
    params.push(filters.status);
  }
  if (filters.method) {
    where.push("d.method = ?");
    params.push(filters.method);
  }
  if (filters.q) {
    const like = `%${escapeLike(filters.q)}%`;
    where.push("(d.lab_code like ? escape '\\' or t.name like ? escape '\\')");
    params.push(like, like);
  }
  const from = `from determinations d
    join samples s on s.id = d.sample_id
    join sites t on t.id = s.site_id
    left join calibrations c on c.determination_id = d.id and c.is_current = 1
    where ${where.join(" and ")}`;
  const total = db.$client
    .prepare(`select count(*) ${from}`)
    .pluck()
    .get(...params) as number;
  const pageCount = Math.max(1, Math.ceil(total / SUBMISSIONS_PAGE_SIZE));
  const page = Math.min(Math.max(1, filters.page), pageCount);
  const rows = db.$client
    .prepare(
      `select d.id, d.lab_code as labCode, d.method, d.signal, d.status, d.grade, d.version,
         t.id as siteId, t.name as siteName, s.field_code as fieldCode, s.material,
         ${LISTED_MEASUREMENT_SQL},
         c.median_cal_bp as medianCalBp, c.error as calibrationError,
         d.created_at as createdAt, d.updated_at as updatedAt
       ${from} order by d.created_at desc, d.id desc limit ? offset ?`,
    )
    .all(...params, SUBMISSIONS_PAGE_SIZE, (page - 1) * SUBMISSIONS_PAGE_SIZE) as (Omit<SubmissionListRow, "isLimit"> & {
    isLimit: number;
  })[];
  const counts = db.$client
    .prepare("select status, count(*) as n from determinations where contributor_id = ? group by status")
    .all(userId) as { status: Status; n: number }[];
  return {
    rows: rows.map((r) => ({ ...r, isLimit: r.isLimit === 1 })),
    total,
    page,
    pageCount,
    pageSize: SUBMISSIONS_PAGE_SIZE,
    statusCounts: Object.fromEntries(counts.map((c) => [c.status, c.n])) as Partial<Record<Status, number>>,
  };
}

/** Whether a listed determination can still be edited or withdrawn by its contributor (the same rule as editRefusal). */
export function listRowEditable(row: Pick<SubmissionListRow, "status">): boolean {
  return editableStatus(row.status);
}

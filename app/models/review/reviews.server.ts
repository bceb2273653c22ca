// Grading, questions and answers. One rule, one place: the review page, the bulk form in the queue
// and the token API all call recordReviews, so separation of duties, leases and the audit trail
// cannot drift between them.

import type { Db } from "#app/db/client.server.ts";
import type { Flag } from "#app/db/schema.ts";
import type { GradeInput } from "#app/utils/review-forms.ts";
import { audit } from "#app/models/audit.server.ts";
import { sendEmail } from "#app/mail/send.server.ts";
import { reviewDigestMessage, reviewQuestionMessage } from "#app/mail/review-messages.server.ts";
import { env } from "#app/utils/env.server.ts";
import { gradeWord } from "#app/utils/labels.ts";

export class ReviewRefused extends Error {
  constructor(
    message: string,
    readonly status: 400 | 403 | 404 | 409,
    readonly field?: string,
  ) {
    super(message);
  }
}

interface DetRow {
  id: number;
  lab_code: string;
  status: string;
  grade: number | null;
  version: number;
  contributor_id: number | null;
  upload_batch_id: number | null;
}

function loadDet(db: Db, id: number): DetRow | undefined {
  return db.$client
    .prepare("select id, lab_code, status, grade, version, contributor_id, upload_batch_id from determinations where id = ?")
    .get(id) as DetRow | undefined;
}

/** Why this reviewer may not grade this determination now, or null. */
export function gradeRefusal(db: Db, det: DetRow | undefined, reviewerId: number): ReviewRefused | null {
  if (!det) return new ReviewRefused("There is no determination with this number.", 404, "determination_id");
  if (det.contributor_id === reviewerId) {
    return new ReviewRefused("You submitted this determination; another reviewer must grade it.", 403, "determination_id");
  }
  if (det.status === "withdrawn")
    return new ReviewRefused(`${det.lab_code} was withdrawn by its contributor.`, 409, "determination_id");
  const lease = db.$client
    .prepare("select reviewer_id, expires_at from review_leases where determination_id = ? and expires_at > ?")
    .get(det.id, Date.now()) as { reviewer_id: number; expires_at: number } | undefined;
  if (lease && lease.reviewer_id !== reviewerId) {
    return new ReviewRefused(
      `${det.lab_code} is taken by another reviewer until ${new Date(lease.expires_at).toISOString().slice(11, 16)} UTC.`,
      409,
      "determination_id",
    );
  }
  return null;
}

export interface ReviewActor {
  userId: number;
  ip?: string | null;
}

/**
 * Grades each determination in one transaction: its own review row, the latest grade on the
 * determination, status graded, version + 1, and its own audit row. Any refusal writes nothing.
 * Returns the review ids in the order given; the contributors' digests go out afterwards.
 */
export function recordReviews(db: Db, ids: readonly number[], input: GradeInput, actor: ReviewActor): number[] {
  const unique = [...new Set(ids)];
  if (unique.length === 0) throw new ReviewRefused("Choose at least one determination.", 400, "determination_id");
  const reviewIds = db.$client.transaction(() => {
    const insert = db.$client.prepare(
      "insert into reviews (determination_id, reviewer_id, grade, flags, comment) values (?, ?, ?, ?, ?)",
    );
    const update = db.$client.prepare(
      "update determinations set grade = ?, status = 'graded', version = version + 1, updated_at = ? where id = ?",
    );
    const out: number[] = [];
    for (const id of unique) {
      const det = loadDet(db, id);
      const refusal = gradeRefusal(db, det, actor.userId);
      if (refusal) throw refusal;
      const flags: Flag[] = [...new Set(input.flags)];
      const r = insert.run(id, actor.userId, input.grade, JSON.stringify(flags), input.comment || null);
      update.run(input.grade, Date.now(), id);
      db.$client.prepare("delete from review_leases where determination_id = ?").run(id);
      audit(db, {
        actorId: actor.userId,
        action: "determination.grade",
        entity: "determination",
        entityId: id,
        before: { status: det!.status, grade: det!.grade, version: det!.version },
        after: { status: "graded", grade: input.grade, flags, comment: input.comment || null, version: det!.version + 1 },
        ip: actor.ip,
      });
      out.push(Number(r.lastInsertRowid));
    }
    return out;
  })();
  void sendDigests(db, unique).catch((e) => console.error("Review digest not sent:", e));
  return reviewIds;
}

function link(path: string): string {
  return new URL(path, env().APP_URL ?? `http://localhost:${env().PORT}`).toString();
}

/**
 * One e-mail per reviewed batch: an upload batch gets its digest when its last determination has
 * been graded; determinations from the form are gathered per contributor within one review action.
 */
export async function sendDigests(db: Db, gradedIds: readonly number[]): Promise<number> {
  if (gradedIds.length === 0) return 0;
  const rows = db.$client
    .prepare(
      `select d.id, d.lab_code, d.grade, d.upload_batch_id, u.email, b.file_name,
         (select count(*) from determinations o where o.upload_batch_id = d.upload_batch_id and o.status not in ('graded', 'withdrawn')) as open
       from determinations d join users u on u.id = d.contributor_id left join upload_batches b on b.id = d.upload_batch_id
       where d.id in (${gradedIds.map(() => "?").join(",")})`,
    )
    .all(...gradedIds) as {
    id: number;
    lab_code: string;
    grade: number;
    upload_batch_id: number | null;
    email: string;
    file_name: string | null;
    open: number;
  }[];
  const groups = new Map<string, { email: string; label: string; batchId: number | null }>();
  for (const r of rows) {
    if (r.upload_batch_id !== null && r.open > 0) continue;
    const key = r.upload_batch_id !== null ? `batch:${r.upload_batch_id}` : `form:${r.email}`;
    if (!groups.has(key))
      groups.set(key, {
        email: r.email,
        label: r.file_name ? `upload “${r.file_name}”` : "submitted by form",
        batchId: r.upload_batch_id,
      });
  }
  let sent = 0;
  for (const g of groups.values()) {
    const items = (
      g.batchId !== null
        ? db.$client
            .prepare(
              "select lab_code, grade from determinations where upload_batch_id = ? and status = 'graded' order by lab_code",
            )
            .all(g.batchId)
        : rows.filter((r) => r.upload_batch_id === null && r.email === g.email)
    ) as { lab_code: string; grade: number }[];
    const message = reviewDigestMessage({
      batchLabel: g.label,
      items: items.map((i) => ({ labCode: i.lab_code, grade: i.grade, gradeWord: gradeWord(i.grade) })),
      submissionsUrl: link("/submissions"),
    });
    await sendEmail({ ...message, to: g.email, tags: [{ name: "kind", value: "review-digest" }] });
    sent++;
  }
  return sent;
}

/** A reviewer's question: the message is kept, the determination waits for its contributor, who gets an e-mail. */
export async function askQuestion(db: Db, id: number, question: string, actor: ReviewActor): Promise<void> {
  const det = loadDet(db, id);
  const refusal = gradeRefusal(db, det, actor.userId);
  if (refusal) throw refusal;
  if (det!.contributor_id === null) throw new ReviewRefused("This determination has no contributor to ask.", 409);
  db.$client.transaction(() => {
    db.$client
      .prepare("insert into review_messages (determination_id, author_id, body) values (?, ?, ?)")
      .run(id, actor.userId, question);
    db.$client
      .prepare("update determinations set status = 'awaiting_answer', version = version + 1, updated_at = ? where id = ?")
      .run(Date.now(), id);
    db.$client.prepare("delete from review_leases where determination_id = ?").run(id);
    audit(db, {
      actorId: actor.userId,
      action: "determination.question",
      entity: "determination",
      entityId: id,
      before: { status: det!.status, version: det!.version },
      after: { status: "awaiting_answer", question, version: det!.version + 1 },
      ip: actor.ip,
    });
  })();
  const email = db.$client.prepare("select email from users where id = ?").pluck().get(det!.contributor_id) as string;
  await sendEmail({
    ...reviewQuestionMessage({ labCode: det!.lab_code, question, answerUrl: link(`/submissions/${id}/answer`) }),
    to: email,
    tags: [{ name: "kind", value: "review-question" }],
  });
}

/** The contributor's answer: kept with the question; the determination returns to the queue. */
export function answerQuestion(db: Db, id: number, answer: string, actor: ReviewActor): void {
  const det = loadDet(db, id);
  if (!det || det.contributor_id !== actor.userId)
    throw new ReviewRefused("There is no such determination among your submissions.", 404);
  if (det.status !== "awaiting_answer") throw new ReviewRefused(`${det.lab_code} is not waiting for an answer.`, 409);
  db.$client.transaction(() => {
    db.$client
      .prepare("insert into review_messages (determination_id, author_id, body) values (?, ?, ?)")
      .run(id, actor.userId, answer);
    db.$client
      .prepare("update determinations set status = 'in_review', version = version + 1, updated_at = ? where id = ?")
      .run(Date.now(), id);
    audit(db, {
      actorId: actor.userId,
      action: "determination.answer",
      entity: "determination",
      entityId: id,
      before: { status: det.status, version: det.version },
      after: { status: "in_review", answer, version: det.version + 1 },
      ip: actor.ip,
    });
  })();
}

/** An editor reopens a graded determination: it returns to the queue and its contributor may edit it again. */
export function reopenDetermination(db: Db, id: number, actor: ReviewActor): void {
  const det = loadDet(db, id);
  if (!det) throw new ReviewRefused("There is no determination with this number.", 404);
  if (det.status !== "graded") throw new ReviewRefused(`${det.lab_code} is not graded.`, 409);
  db.$client.transaction(() => {
    db.$client
      .prepare("update determinations set status = 'in_review', version = version + 1, updated_at = ? where id = ?")
      .run(Date.now(), id);
    audit(db, {
      actorId: actor.userId,
      action: "determination.reopen",
      entity: "determination",
      entityId: id,
      before: { status: det.status, grade: det.grade, version: det.version },
      after: { status: "in_review", grade: det.grade, version: det.version + 1 },
      ip: actor.ip,
    });
  })();
}

export function reviewMessages(db: Db, id: number) {
  return db.$client
    .prepare(
      `select m.id, m.body, m.created_at as createdAt, u.name as authorName, m.author_id as authorId
       from review_messages m join users u on u.id = m.author_id where m.determination_id = ? order by m.id`,
    )
    .all(id) as { id: number; body: string; createdAt: number; authorName: string; authorId: number }[];
}

/** A determination as its contributor's answer page needs it, or null when there is none with this id. */
export function determinationForAnswer(
  db: Db,
  id: number,
): { id: number; labCode: string; status: string; contributorId: number | null } | null {
  return (
    (db.$client
      .prepare("select id, lab_code as labCode, status, contributor_id as contributorId from determinations where id = ?")
      .get(id) as { id: number; labCode: string; status: string; contributorId: number | null } | undefined) ?? null
  );
}

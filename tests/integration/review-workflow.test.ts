import { describe, expect, it } from "vitest";
import { getDb } from "#app/db/client.server.ts";
import { readFakeOutbox } from "#app/mail/outbox.server.ts";
import {
  answerQuestion,
  askQuestion,
  recordReviews,
  reopenDetermination,
  reviewMessages,
  ReviewRefused,
} from "#app/models/review/reviews.server.ts";
import { answerSchema, questionSchema } from "#app/utils/review-forms.ts";
import { createTestDetermination, createTestUser } from "#tests/factories.ts";
import { useMailFake } from "#tests/support/mail-fake.ts";

useMailFake("review");
const db = () => getDb();
const status = (id: number) => db().$client.prepare("select status from determinations where id = ?").pluck().get(id);
const count = (sql: string, ...p: unknown[]) =>
  db()
    .$client.prepare(sql)
    .pluck()
    .get(...p) as number;

function setup() {
  const contributor = createTestUser(db(), ["contributor"]);
  const reviewer = createTestUser(db(), ["reviewer"]);
  const det = createTestDetermination(db(), { contributorId: contributor.id, actorId: contributor.id, status: "in_review" });
  return { contributor, reviewer, det };
}

async function mailTo(email: string) {
  for (let i = 0; i < 50; i++) {
    const { entries } = await readFakeOutbox(200);
    const mine = entries.filter((e) => e.to.includes(email));
    if (mine.length) return mine;
    await new Promise((r) => setTimeout(r, 20));
  }
  return [];
}

describe("a question and its answer", () => {
  it("waits for the contributor, e-mails a link, and the answer returns it to the queue", async () => {
    const { contributor, reviewer, det } = setup();
    const q = questionSchema.parse({ question: "Was this shell in growth position or a fragment?" });
    await askQuestion(db(), det.id, q.question, { userId: reviewer.id });
    expect(status(det.id)).toBe("awaiting_answer");
    const mail = await mailTo(contributor.email);
    expect(mail).toHaveLength(1);
    expect(mail[0].text).toContain(`/submissions/${det.id}/answer`);
    expect(mail[0].text).toContain("growth position");

    const a = answerSchema.parse({ answer: "Paired valves in growth position." });
    answerQuestion(db(), det.id, a.answer, { userId: contributor.id });
    expect(status(det.id)).toBe("in_review");
    expect(reviewMessages(db(), det.id).map((m) => m.body)).toEqual([q.question, a.answer]);
    expect(
      count(
        "select count(*) from audit_log where entity_id = ? and action in ('determination.question', 'determination.answer')",
        String(det.id),
      ),
    ).toBe(2);
  });

  it("only the contributor answers, and only while it waits", async () => {
    const { contributor, reviewer, det } = setup();
    expect(() => answerQuestion(db(), det.id, "too early", { userId: contributor.id })).toThrow(ReviewRefused);
    await askQuestion(db(), det.id, "Which core depth exactly?", { userId: reviewer.id });
    expect(() => answerQuestion(db(), det.id, "not mine", { userId: reviewer.id })).toThrow(ReviewRefused);
    expect(status(det.id)).toBe("awaiting_answer");
  });

  it("nobody asks about what they submitted", async () => {
    const both = createTestUser(db(), ["contributor", "reviewer"]);
    const det = createTestDetermination(db(), { contributorId: both.id, actorId: both.id });
    await expect(askQuestion(db(), det.id, "A question to myself?", { userId: both.id })).rejects.toThrow(/another reviewer/);
    expect(count("select count(*) from review_messages where determination_id = ?", det.id)).toBe(0);
  });
});

describe("grading", () => {
  it("bulk review: one transaction, a review row and an audit row for each, one digest for the form submissions", async () => {
    const contributor = createTestUser(db(), ["contributor"]);
    const reviewer = createTestUser(db(), ["reviewer"]);
    const ids = [1, 2, 3].map(
      (i) =>
        createTestDetermination(db(), {
          contributorId: contributor.id,
          actorId: contributor.id,
          labCode: `BLK-${i}-${contributor.id}`,
        }).id,
    );
    const reviewIds = recordReviews(
      db(),
      ids,
      { grade: 1, flags: ["bulk_sediment"], comment: "Bulk sediment." },
      { userId: reviewer.id },
    );
    expect(reviewIds).toHaveLength(3);
    for (const id of ids) {
      expect(status(id)).toBe("graded");
      expect(count("select count(*) from reviews where determination_id = ?", id)).toBe(1);
      expect(count("select count(*) from audit_log where action = 'determination.grade' and entity_id = ?", String(id))).toBe(1);
    }
    const mail = await mailTo(contributor.email);
    expect(mail).toHaveLength(1);
    expect(mail[0].subject).toContain("3 determinations");
  });

  it("a refusal in a bulk review writes nothing at all", () => {
    const contributor = createTestUser(db(), ["contributor", "reviewer"]);
    const other = createTestUser(db(), ["contributor"]);
    const theirs = createTestDetermination(db(), { contributorId: other.id, actorId: other.id });
    const own = createTestDetermination(db(), { contributorId: contributor.id, actorId: contributor.id });
    expect(() => recordReviews(db(), [theirs.id, own.id], { grade: 3, flags: [] }, { userId: contributor.id })).toThrow(
      /another reviewer/,
    );
    expect(count("select count(*) from reviews where determination_id in (?, ?)", theirs.id, own.id)).toBe(0);
    expect(status(theirs.id)).not.toBe("graded");
  });

  it("keeps every review, shows the latest, and an editor can reopen (audited)", () => {
    const { reviewer, det } = setup();
    const editor = createTestUser(db(), ["editor"]);
    recordReviews(db(), [det.id], { grade: 3, flags: [] }, { userId: reviewer.id });
    recordReviews(db(), [det.id], { grade: 1, flags: ["reworked"] }, { userId: reviewer.id });
    expect(count("select count(*) from reviews where determination_id = ?", det.id)).toBe(2);
    expect(count("select grade from determinations where id = ?", det.id)).toBe(1);
    reopenDetermination(db(), det.id, { userId: editor.id });
    expect(status(det.id)).toBe("in_review");
    expect(count("select count(*) from audit_log where action = 'determination.reopen' and entity_id = ?", String(det.id))).toBe(
      1,
    );
  });

  it("a lease held by another reviewer refuses the grade", () => {
    const { reviewer, det } = setup();
    const other = createTestUser(db(), ["reviewer"]);
    db()
      .$client.prepare("insert into review_leases (determination_id, reviewer_id, expires_at) values (?, ?, ?)")
      .run(det.id, other.id, Date.now() + 60_000);
    expect(() => recordReviews(db(), [det.id], { grade: 2, flags: [] }, { userId: reviewer.id })).toThrow(/taken/);
    db()
      .$client.prepare("update review_leases set expires_at = ? where determination_id = ?")
      .run(Date.now() - 1, det.id);
    expect(recordReviews(db(), [det.id], { grade: 2, flags: [] }, { userId: reviewer.id })).toHaveLength(1);
  });
});

import { expect, test } from "vitest";
import { getDb } from "#app/db/client.server.ts";
import { jobs } from "#app/db/schema.ts";
import { getJob, jobFinished, markInterruptedJobs, recentJobs, startJob, type JobHandler } from "#app/models/jobs.server.ts";

test("a job runs its handler in chunks in the background, records progress after each, and ends done", async () => {
  const db = getDb();
  const items = Array.from({ length: 10 }, (_, i) => i);
  const seen: number[][] = [];
  const progressDuring: number[] = [];
  const handler: JobHandler<{ note: string }> = async (ctx) => {
    expect(ctx.params.note).toBe("hello");
    await ctx.inChunks(items, 4, (chunk) => {
      seen.push(chunk);
      progressDuring.push(getJob(db, ctx.jobId)!.progress);
    });
    return `${items.length} handled.`;
  };
  const { jobId, total } = startJob(
    db,
    { kind: "recalibrate", total: items.length, params: { note: "hello" }, actorId: null },
    handler,
  );
  expect(total).toBe(10);
  // Nothing has run yet: the request that started it answers first.
  expect(getJob(db, jobId)).toMatchObject({ status: "queued", progress: 0, total: 10 });
  await jobFinished(jobId);
  expect(seen).toEqual([
    [0, 1, 2, 3],
    [4, 5, 6, 7],
    [8, 9],
  ]);
  expect(progressDuring).toEqual([0, 4, 8]);
  expect(getJob(db, jobId)).toMatchObject({ status: "done", progress: 10, message: "10 handled.", params: { note: "hello" } });
});

test("a handler that throws leaves the job failed with how far it got and why", async () => {
  const db = getDb();
  const { jobId } = startJob(db, { kind: "recalibrate", total: 6, params: {}, actorId: null }, async (ctx) => {
    await ctx.inChunks([1, 2, 3, 4, 5, 6], 2, (chunk) => {
      if (chunk[0] === 5) throw new Error("the third chunk broke");
    });
    return "never";
  });
  await jobFinished(jobId);
  expect(getJob(db, jobId)).toMatchObject({ status: "failed", message: "Stopped after 4 of 6: the third chunk broke" });
});

test("a job a restart cut off reads as interrupted without a write (a GET), and is recorded so at the next start", () => {
  const db = getDb();
  const cut = db.insert(jobs).values({ kind: "recalibrate", status: "running", progress: 3, total: 9 }).returning().get();
  const message = "Interrupted by a server restart after 3 of 9; start it again to finish.";
  expect(getJob(db, cut.id)).toMatchObject({ status: "failed", message });
  expect(recentJobs(db, "recalibrate")[0]).toMatchObject({ id: cut.id, status: "failed", message });
  // Reading wrote nothing …
  expect(db.$client.prepare("select status from jobs where id = ?").pluck().get(cut.id)).toBe("running");
  // … the start records it.
  expect(markInterruptedJobs(db)).toBe(1);
  expect(db.$client.prepare("select status, message from jobs where id = ?").get(cut.id)).toEqual({ status: "failed", message });
});

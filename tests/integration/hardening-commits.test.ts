import { afterAll, describe, expect, it } from "vitest";
import { getDb } from "#app/db/client.server.ts";
import { createToken } from "#app/models/accounts/tokens.server.ts";
import * as commitApi from "#app/routes/api/v1/uploads.commit.ts";
import * as uploadPage from "#app/routes/contribute/upload.tsx";
import * as jobsResource from "#app/routes/resources/jobs.ts";
import { createSession } from "#app/auth/session.server.ts";
import { closeWorkers } from "#app/workers/pool.server.ts";
import { args, get, ORIGIN, personWithSession, post, run } from "#tests/support/auth.ts";
import { contributorWithToken, determinationCount, uploadedSheet } from "#tests/support/api-uploads.ts";

/*
 * Issue 14: commits in the writer thread while the server's own thread writes. A commit read the
 * upload again and validated it in a deferred transaction, then asked for the write lock; when the
 * server's thread had written anything meanwhile (a rate-limit counter, a session), SQLite refused
 * the upgrade at once ("database is locked", SQLITE_BUSY_SNAPSHOT) and the commit failed with a 500.
 */

afterAll(() => closeWorkers());

describe("commits while the server's thread writes", () => {
  it("a commit succeeds although this thread keeps writing while it is checked and written", { timeout: 240_000 }, async () => {
    const person = contributorWithToken();
    const id = await uploadedSheet(1500, "ZC1Q", person.token);
    const before = determinationCount();
    let committing = true;
    let writes = 0;
    // Small writes on this thread, as sign-ins make them, all through the commit (they wait for the
    // commit's lock without holding up the thread: db/write-when-free.server.ts).
    const writer = (async () => {
      while (committing) {
        await createSession(person.id, new Request(`${ORIGIN}/`));
        writes++;
        await new Promise((r) => setTimeout(r, 5));
      }
    })();
    const commit = new Request(`${ORIGIN}/api/v1/uploads/${id}/commit`, {
      method: "POST",
      body: JSON.stringify({ mode: "all" }),
      headers: { "Content-Type": "application/json", Authorization: `Bearer ${person.token}` },
    });
    const result = await run(() => commitApi.action(args(commit, { uploadId: id }))).finally(() => (committing = false));
    await writer;
    expect(result.status).toBe(200);
    expect((result.data as { committed: number }).committed).toBe(1500);
    expect(determinationCount()).toBe(before + 1500);
    expect(writes).toBeGreaterThan(0);
  });
});

describe("a commit's progress", () => {
  it(
    "the upload page's commit writes a job row whose progress the page can follow while it waits",
    { timeout: 240_000 },
    async () => {
      const p = await personWithSession(["contributor"]);
      const token = createToken(getDb(), p.id, "test", { actorId: p.id }).token;
      const publicId = await uploadedSheet(1500, "ZC2Q", token);
      const ticket = "t-0f1e2d";
      const seen: { status: string; progress: number; total: number; message: string | null }[] = [];
      let waiting = true;
      const follow = (async () => {
        while (waiting) {
          const res = await run(() =>
            jobsResource.loader(
              args(get(`/api/jobs/ticket?kind=upload-commit&ticket=${ticket}`, { cookie: p.cookie }), { id: "ticket" }),
            ),
          );
          if (res.status === 200) seen.push(res.data as (typeof seen)[number]);
          await new Promise((r) => setTimeout(r, 25));
        }
      })();
      const committed = await run(() =>
        uploadPage.action(
          args(post(`/uploads/${publicId}`, { intent: "commit-valid", ticket }, { cookie: p.cookie }), { publicId }),
        ),
      ).finally(() => (waiting = false));
      await follow;
      expect(committed.status).toBe(302);
      // While it ran: the job was there, running, with rows written counted before the end.
      const during = seen.filter((j) => j.status === "running");
      expect(during.length).toBeGreaterThan(0);
      expect(during.some((j) => j.progress > 0 && j.progress < 1500 && j.message === "Writing rows")).toBe(true);
      expect(during.every((j) => j.total === 1500)).toBe(true);
      // At the end the row says what was done.
      const done = await run(() =>
        jobsResource.loader(
          args(get(`/api/jobs/ticket?kind=upload-commit&ticket=${ticket}`, { cookie: p.cookie }), { id: "ticket" }),
        ),
      );
      expect(done.data).toMatchObject({ status: "done", progress: 1500, message: "Committed 1,500 determinations." });
      // Another person cannot follow it by its ticket.
      const other = await personWithSession(["contributor"]);
      const theirs = await run(() =>
        jobsResource.loader(
          args(get(`/api/jobs/ticket?kind=upload-commit&ticket=${ticket}`, { cookie: other.cookie }), { id: "ticket" }),
        ),
      );
      expect(theirs.status).toBe(404);
    },
  );
});

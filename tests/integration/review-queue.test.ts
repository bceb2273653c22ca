import { describe, expect, it } from "vitest";
import { getDb } from "#app/db/client.server.ts";
import * as queue from "#app/routes/review/queue.tsx";
import * as item from "#app/routes/review/item.tsx";
import { createTestDetermination } from "#tests/factories.ts";
import { args, get, personWithSession, post, run } from "#tests/support/auth.ts";

const status = (id: number) => getDb().$client.prepare("select status from determinations where id = ?").pluck().get(id);

describe("the review queue and page", () => {
  it("lists what awaits review but never the reviewer's own submissions", async () => {
    const me = await personWithSession(["contributor", "reviewer"]);
    const other = await personWithSession(["contributor"]);
    const mine = createTestDetermination(getDb(), { contributorId: me.id, actorId: me.id });
    const theirs = createTestDetermination(getDb(), { contributorId: other.id, actorId: other.id });
    const out = await run(() => queue.loader(args(get("/review", { cookie: me.cookie }))));
    const ids = (out.data as { queue: { rows: { id: number }[] } }).queue.rows.map((r) => r.id);
    expect(ids).toContain(theirs.id);
    expect(ids).not.toContain(mine.id);
  });

  it("the page refuses to grade one's own submission (403) and writes nothing", async () => {
    const me = await personWithSession(["contributor", "reviewer"]);
    const mine = createTestDetermination(getDb(), { contributorId: me.id, actorId: me.id });
    const out = await run(() =>
      item.action(
        args(post(`/review/${mine.id}`, { intent: "grade", grade: "3" }, { cookie: me.cookie }), { id: String(mine.id) }),
      ),
    );
    expect(out.status).toBe(403);
    expect(status(mine.id)).not.toBe("graded");
  });

  it("grades from the page and moves on; a taken item is refused to another reviewer", async () => {
    const a = await personWithSession(["reviewer"]);
    const b = await personWithSession(["reviewer"]);
    const c = await personWithSession(["contributor"]);
    const det = createTestDetermination(getDb(), { contributorId: c.id, actorId: c.id });
    const take = await run(() =>
      item.action(args(post(`/review/${det.id}`, { intent: "take" }, { cookie: a.cookie }), { id: String(det.id) })),
    );
    expect(take.status).toBe(302);
    const refused = await run(() =>
      item.action(args(post(`/review/${det.id}`, { intent: "grade", grade: "2" }, { cookie: b.cookie }), { id: String(det.id) })),
    );
    expect(refused.status).toBe(409);
    const bad = await run(() =>
      item.action(args(post(`/review/${det.id}`, { intent: "grade", grade: "7" }, { cookie: a.cookie }), { id: String(det.id) })),
    );
    expect(bad.status).toBe(400);
    const ok = await run(() =>
      item.action(
        args(post(`/review/${det.id}`, { intent: "grade", grade: "2", flags: "reworked" }, { cookie: a.cookie }), {
          id: String(det.id),
        }),
      ),
    );
    expect(ok.status).toBe(302);
    expect(status(det.id)).toBe("graded");
  });
});

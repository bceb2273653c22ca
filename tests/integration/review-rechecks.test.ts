import { eq } from "drizzle-orm";
import { describe, expect, it } from "vitest";
import { getDb } from "#app/db/client.server.ts";
import { uploadBatches } from "#app/db/schema.ts";
import { runChecksFor } from "#app/models/review/check-run.server.ts";
import { recordReviews, reopenDetermination } from "#app/models/review/reviews.server.ts";
import { editRefusal, getDetermination, withdrawSubmission } from "#app/models/submission/form/write.server.ts";
import { listRowEditable, listSubmissions } from "#app/models/submission/list.server.ts";
import { createUpload } from "#app/models/submission/uploads/batches.server.ts";
import { commitUpload } from "#app/models/submission/uploads/commit.server.ts";
import { undoUpload } from "#app/models/submission/uploads/undo.server.ts";
import { calibrateDeterminations } from "#app/models/calibration/calibrations.server.ts";
import { createTestDetermination, createTestSample, createTestSite, createTestUser } from "#tests/factories.ts";
import { toCsvText, uploadRows } from "#tests/support/upload-files.ts";
import * as determinationPage from "#app/routes/explore/determination.tsx";
import { args, get, personWithSession, post, run } from "#tests/support/auth.ts";

const db = () => getDb();
const result = (id: number, check: string) =>
  db()
    .$client.prepare('select severity, details from check_results where determination_id = ? and "check" = ?')
    .get(id, check) as { severity: string; details: string } | undefined;

describe("a reopened determination", () => {
  it("is locked for its contributor while graded and editable again once an editor reopens it", () => {
    const contributor = createTestUser(db(), ["contributor"]);
    const reviewer = createTestUser(db(), ["reviewer"]);
    const editor = createTestUser(db(), ["editor"]);
    const det = createTestDetermination(db(), { contributorId: contributor.id, status: "in_review" });
    recordReviews(db(), [det.id], { grade: 1, flags: ["reworked"] }, { userId: reviewer.id });
    const graded = getDetermination(db(), det.id)!;
    expect(editRefusal(graded, contributor.id)).toMatch(/graded by a reviewer/);
    expect(() => withdrawSubmission(db(), det.id, { userId: contributor.id })).toThrow(/graded by a reviewer/);
    const listed = () => listSubmissions(db(), contributor.id, { page: 1 }).rows.find((r) => r.id === det.id)!;
    expect(listRowEditable(listed())).toBe(false);

    reopenDetermination(db(), det.id, { userId: editor.id });
    // A review is on record, but the determination is no longer graded: its contributor may change it again.
    expect(editRefusal(getDetermination(db(), det.id)!, contributor.id)).toBeNull();
    expect(listRowEditable(listed())).toBe(true);
    expect(withdrawSubmission(db(), det.id, { userId: contributor.id }).status).toBe("withdrawn");
    // Still nobody else's to change.
    expect(editRefusal(getDetermination(db(), det.id)!, editor.id)).toMatch(/Only the contributor/);
  });

  it("an editor reopens from the determination page; the button shows only to editors and only while graded", async () => {
    const editor = await personWithSession(["editor"]);
    const reviewer = await personWithSession(["reviewer"]);
    const det = createTestDetermination(db(), { status: "in_review" });
    const id = { id: String(det.id) };
    const page = async (cookie: string) =>
      (await run(() => determinationPage.loader(args(get(`/determinations/${det.id}`, { cookie }), id)))).data as {
        canReopen: boolean;
      };
    // Not graded yet: nothing to reopen, and the action says so without changing anything.
    expect((await page(editor.cookie)).canReopen).toBe(false);
    const early = await run(() =>
      determinationPage.action(args(post(`/determinations/${det.id}`, { intent: "reopen" }, { cookie: editor.cookie }), id)),
    );
    expect(early.status).toBe(409);
    recordReviews(db(), [det.id], { grade: 2, flags: [] }, { userId: reviewer.id });
    expect((await page(reviewer.cookie)).canReopen).toBe(false);
    expect((await page(editor.cookie)).canReopen).toBe(true);
    const out = await run(() =>
      determinationPage.action(args(post(`/determinations/${det.id}`, { intent: "reopen" }, { cookie: editor.cookie }), id)),
    );
    expect(out.status).toBe(302);
    expect(getDetermination(db(), det.id)!.status).toBe("in_review");
  });
});

describe("undoing an upload", () => {
  it("rechecks the determinations the removed ones leave behind: neighbours and lab-code twins", async () => {
    // A place of its own, far from the other tests' fixtures.
    const at = { latitude: 61.4321, longitude: -59.8765 };
    const rows = uploadRows(6, { prefix: "ZUQ" }).map((r) => ({ ...r, ...at, site_name: "Undo Testnes" }));
    const site = createTestSite(db(), { name: "Undo Testnes old", latitude: at.latitude + 0.003, longitude: at.longitude });
    // The same lab code as the file's first row, written another way.
    const twin = createTestDetermination(db(), {
      sampleId: createTestSample(db(), { siteId: site.id }).id,
      labCode: "zuq 1",
      c14AgeYr: 8200,
      c14ErrorYr: 45,
    });
    calibrateDeterminations(db(), [twin.id]);
    runChecksFor(db(), [twin.id]);
    expect(result(twin.id, "duplicates")?.severity).toBe("pass");
    expect(JSON.parse(result(twin.id, "neighbours")!.details).neighbours ?? 0).toBe(0);

    const userId = createTestUser(db()).id;
    const { batch } = await createUpload(db(), { userId, fileName: "undo.csv", file: Buffer.from(toCsvText(rows)) });
    expect(commitUpload(db(), batch, "all", { userId }).committed).toBe(6);
    expect(result(twin.id, "duplicates")?.severity).toBe("conflict");
    expect(JSON.parse(result(twin.id, "neighbours")!.details).neighbours).toBeGreaterThan(0);

    const committed = db().select().from(uploadBatches).where(eq(uploadBatches.id, batch.id)).get()!;
    expect(undoUpload(db(), committed, { userId }).removed).toBe(6);
    expect(result(twin.id, "duplicates")?.severity).toBe("pass");
    expect(JSON.parse(result(twin.id, "neighbours")!.details).neighbours ?? 0).toBe(0);
  });
});

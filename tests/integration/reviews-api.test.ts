import { describe, expect, it } from "vitest";
import { getDb } from "#app/db/client.server.ts";
import { createToken } from "#app/models/accounts/tokens.server.ts";
import { runChecksFor } from "#app/models/review/check-run.server.ts";
import { calibrateDeterminations } from "#app/models/calibration/calibrations.server.ts";
import * as reviewsApi from "#app/routes/api/v1/reviews.ts";
import * as oneApi from "#app/routes/api/v1/determination.ts";
import * as listApi from "#app/routes/api/v1/determinations.ts";
import { createTestDetermination, createTestUser } from "#tests/factories.ts";
import { args, ORIGIN, run } from "#tests/support/auth.ts";

const db = () => getDb();

function person(roles: ("contributor" | "reviewer" | "modeller")[]) {
  const user = createTestUser(db(), roles);
  return { id: user.id, token: createToken(db(), user.id, "test", { actorId: user.id }).token };
}

function postReview(token: string, body: unknown) {
  return run(() =>
    reviewsApi.action(
      args(
        new Request(`${ORIGIN}/api/v1/reviews`, {
          method: "POST",
          headers: { Authorization: `Bearer ${token}`, "Content-Type": "application/json" },
          body: typeof body === "string" ? body : JSON.stringify(body),
        }),
      ),
    ),
  );
}

async function getOne(token: string, id: number | string) {
  return run(() =>
    oneApi.loader({
      ...args(new Request(`${ORIGIN}/api/v1/determinations/${id}`, { headers: { Authorization: `Bearer ${token}` } })),
      params: { id: String(id) },
    } as never),
  );
}

function submitted(contributorId: number) {
  const det = createTestDetermination(db(), { contributorId, actorId: contributorId, status: "in_review" });
  calibrateDeterminations(db(), [det.id]);
  runChecksFor(db(), [det.id]);
  return det;
}

describe("POST /api/v1/reviews and GET /api/v1/determinations/{id}", () => {
  it("grades with 201 {id}; the grade, the review and the checks show at once in the GET", async () => {
    const contributor = person(["contributor"]);
    const reviewer = person(["reviewer"]);
    const modeller = person(["modeller"]);
    const det = submitted(contributor.id);
    const out = await postReview(reviewer.token, {
      determination_id: det.id,
      grade: 2,
      flags: ["bulk_sediment"],
      comment: "Usable with care.",
    });
    expect(out.status).toBe(201);
    const { id } = out.data as { id: number };
    expect(id).toBeGreaterThan(0);
    const one = await getOne(modeller.token, det.id);
    expect(one.status).toBe(200);
    const body = one.data as Record<string, unknown> & { checks: Record<string, unknown>[]; reviews: Record<string, unknown>[] };
    expect(body.grade).toBe(2);
    expect(body.status).toBe("graded");
    expect(body.lab_code).toBe(det.labCode);
    expect(body.reviews).toEqual([
      { grade: 2, flags: ["bulk_sediment"], comment: "Usable with care.", created_at: expect.any(String) },
    ]);
    expect(body.checks).toHaveLength(7);
    expect(Object.keys(body.checks[0]).sort()).toEqual(["check", "details", "message", "severity"]);
    const audits = db()
      .$client.prepare("select count(*) from audit_log where action = 'determination.grade' and entity_id = ?")
      .pluck()
      .get(String(det.id));
    expect(audits).toBe(1);
  });

  it("the list item and the single item share one shape", async () => {
    const contributor = person(["contributor"]);
    const modeller = person(["modeller"]);
    const det = submitted(contributor.id);
    const list = await run(() =>
      listApi.loader(
        args(
          new Request(`${ORIGIN}/api/v1/determinations?q=${det.labCode}&status=all`, {
            headers: { Authorization: `Bearer ${modeller.token}` },
          }),
        ),
      ),
    );
    const item = (list.data as { determinations: Record<string, unknown>[] }).determinations[0];
    const one = (await getOne(modeller.token, det.id)).data as Record<string, unknown>;
    const { checks: _c, reviews: _r, ...rest } = one;
    expect(rest).toEqual(item);
  });

  it("403 when the reviewer submitted it, and nothing is written", async () => {
    const both = person(["contributor", "reviewer"]);
    const det = submitted(both.id);
    const out = await postReview(both.token, { determination_id: det.id, grade: 3, flags: [] });
    expect(out.status).toBe(403);
    expect(db().$client.prepare("select count(*) from reviews where determination_id = ?").pluck().get(det.id)).toBe(0);
  });

  it("400 naming the field for an unknown grade or flag; 404 for an unknown determination", async () => {
    const reviewer = person(["reviewer"]);
    const det = submitted(person(["contributor"]).id);
    const badGrade = await postReview(reviewer.token, { determination_id: det.id, grade: 5, flags: [] });
    expect(badGrade.status).toBe(400);
    expect((badGrade.data as { errors: { field: string }[] }).errors.map((e) => e.field)).toEqual(["grade"]);
    const badFlag = await postReview(reviewer.token, { determination_id: det.id, grade: 1, flags: ["moon_dust"] });
    expect(badFlag.status).toBe(400);
    const errors = (badFlag.data as { errors: { field: string; message: string }[] }).errors;
    expect(errors[0].field).toBe("flags");
    expect(errors[0].message).toMatch(/flags/);
    expect((await postReview(reviewer.token, { determination_id: 99_999_999, grade: 1, flags: [] })).status).toBe(404);
    expect((await getOne(reviewer.token, 99_999_999)).status).toBe(404);
    expect((await postReview(reviewer.token, "{not json")).status).toBe(400);
  });

  it("refuses a modeller's token and a missing token", async () => {
    const modeller = person(["modeller"]);
    const det = submitted(person(["contributor"]).id);
    expect((await postReview(modeller.token, { determination_id: det.id, grade: 1 })).status).toBe(403);
    expect((await postReview("nope", { determination_id: det.id, grade: 1 })).status).toBe(401);
  });
});

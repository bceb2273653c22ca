import { describe, expect, it } from "vitest";
import { seedForFile } from "#tests/support/test-db.ts";
import { getDb } from "#app/db/client.server.ts";
import { createTestDetermination, createTestUser } from "#tests/factories.ts";
import { DEMO_CONTRIBUTORS, PLANTED_FAULTS, SCENARIO_SIZES } from "#seed/scenario.ts";
import { DEMO_USERS, SeedRefusedError, seedDemo, type SeedResult } from "#seed/seed.server.ts";

const count = (sql: string, ...params: unknown[]) =>
  (
    getDb()
      .$client.prepare(sql)
      .get(...params) as { n: number }
  ).n;

let first: SeedResult;

seedForFile(async () => {
  first = await seedDemo(getDb(), { size: "small" });
});

// The tests build on one seeded database in order (the last adds real work), so they keep their order.
describe("seeding the small demo", { shuffle: false }, () => {
  it("writes the scenario's sites, samples and determinations", () => {
    const n = count("select count(*) as n from determinations");
    expect(n).toBe(first.summary.determinations);
    expect(Math.abs(n - SCENARIO_SIZES.small)).toBeLessThanOrEqual(SCENARIO_SIZES.small * 0.1);
    expect(count("select count(*) as n from sites")).toBe(first.summary.sites);
    expect(count("select count(*) as n from samples")).toBe(first.summary.samples);
    expect(count("select count(*) as n from determinations where method = 'luminescence'")).toBe(first.summary.luminescence);
    expect(count("select count(*) as n from labs")).toBe(6);
  });

  it("keeps one truth row per determination with every kind of planted fault", () => {
    expect(count("select count(*) as n from scenario_truth")).toBe(first.summary.determinations);
    expect(
      count(
        "select count(*) as n from determinations d left join scenario_truth t on t.determination_id = d.id where t.determination_id is null",
      ),
    ).toBe(0);
    for (const fault of PLANTED_FAULTS) {
      const planted = count("select count(*) as n from scenario_truth where planted_fault = ?", fault);
      expect(planted, fault).toBe(first.summary.faults[fault]);
      expect(planted, fault).toBeGreaterThan(0);
    }
    expect(count("select count(*) as n from scenario_truth where true_age_cal_bp is null or true_age_cal_bp <= 0")).toBe(0);
  });

  it("creates the demo people with their roles", () => {
    for (const u of DEMO_USERS) {
      const roles = getDb()
        .$client.prepare("select r.role from user_roles r join users u on u.id = r.user_id where u.email = ? order by r.role")
        .pluck()
        .all(u.email);
      expect(roles, u.email).toEqual([...u.roles].sort());
    }
  });

  it("writes one creation audit row per determination by its contributor, and grading rows by the reviewer", () => {
    const reviewer = first.userIds["reviewer@example.org"];
    expect(
      count(
        `select count(*) as n from audit_log a join determinations d on cast(d.id as text) = a.entity_id
         where a.action = 'determination.create' and a.entity = 'determination' and a.actor_id = d.contributor_id`,
      ),
    ).toBe(first.summary.determinations);
    // Spread over the invented contributors; the demo sign-in account owns a modest share.
    const owners = getDb()
      .$client.prepare(
        "select u.email, count(*) as n from determinations d join users u on u.id = d.contributor_id group by u.email",
      )
      .all() as { email: string; n: number }[];
    expect(owners.length).toBeGreaterThanOrEqual(5);
    const demoShare = (owners.find((o) => o.email === "contributor@example.org")?.n ?? 0) / first.summary.determinations;
    expect(demoShare).toBeGreaterThan(0.01);
    expect(demoShare).toBeLessThan(0.2);
    const graded = count("select count(*) as n from determinations where status = 'graded'");
    expect(graded).toBeGreaterThan(0);
    expect(count("select count(*) as n from reviews where reviewer_id = ?", reviewer)).toBe(graded);
    expect(count("select count(*) as n from audit_log where action = 'determination.grade' and actor_id = ?", reviewer)).toBe(
      graded,
    );
    expect(
      count(
        "select count(*) as n from determinations d join reviews r on r.determination_id = d.id where d.grade is not r.grade",
      ),
    ).toBe(0);
    expect(count("select count(*) as n from determinations where status in ('submitted', 'in_review')")).toBeGreaterThan(graded);
  });

  it("stores the demo reconstruction", () => {
    const row = getDb().$client.prepare("select geojson from reconstructions where is_demo = 1").get() as { geojson: string };
    const collection = JSON.parse(row.geojson);
    expect(collection.type).toBe("FeatureCollection");
    expect(collection.features).toHaveLength(29);
    expect(collection.features[0].properties.age_cal_bp).toBe(14000);
  });

  it("calibrates every determination", () => {
    expect(first.calibrated + first.calibrationFailures).toBe(first.summary.determinations);
    expect(count("select count(distinct determination_id) as n from calibrations where is_current = 1")).toBe(
      first.summary.determinations,
    );
  });

  it("refuses to seed again without --reset and leaves the registry as it was", async () => {
    const before = count("select count(*) as n from determinations");
    await expect(seedDemo(getDb(), { size: "small", calibrate: false })).rejects.toBeInstanceOf(SeedRefusedError);
    expect(count("select count(*) as n from determinations")).toBe(before);
  });

  it("replaces the demo data with --reset", async () => {
    const again = await seedDemo(getDb(), { size: "small", reset: true, calibrate: false });
    expect(again.summary).toEqual(first.summary);
    expect(count("select count(*) as n from determinations")).toBe(first.summary.determinations);
    expect(count("select count(*) as n from scenario_truth")).toBe(first.summary.determinations);
    expect(count("select count(*) as n from sites")).toBe(first.summary.sites);
    expect(count("select count(*) as n from labs")).toBe(6);
    expect(count("select count(*) as n from reconstructions where is_demo = 1")).toBe(1);
    expect(count("select count(*) as n from audit_log where action = 'determination.create'")).toBe(first.summary.determinations);
    const people = new Set([...DEMO_USERS, ...DEMO_CONTRIBUTORS].map((u) => u.email));
    expect(count("select count(*) as n from users where email like '%@example.org'")).toBe(people.size);
  });

  it("refuses --reset when the registry holds determinations that are not demo data", async () => {
    const person = createTestUser(getDb(), ["contributor"]);
    const own = createTestDetermination(getDb(), { actorId: person.id });
    const audit = getDb()
      .$client.prepare("select actor_id, after from audit_log where action = 'determination.create' and entity_id = ?")
      .get(String(own.id)) as { actor_id: number; after: string };
    expect(audit.actor_id).toBe(person.id);
    expect(JSON.parse(audit.after).labCode).toBe(own.labCode);

    const before = count("select count(*) as n from determinations");
    await expect(seedDemo(getDb(), { size: "small", reset: true, calibrate: false })).rejects.toThrow(/not demo data/);
    expect(count("select count(*) as n from determinations")).toBe(before);
  });
});

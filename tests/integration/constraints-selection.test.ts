import { describe, expect, it } from "vitest";
import { seedForFile } from "#tests/support/test-db.ts";
import { getDb } from "#app/db/client.server.ts";
import { selectionCount, selectionIds } from "#app/models/registry/constraints.server.ts";
import { parseConstraintFilter, type ConstraintFilter } from "#app/utils/constraint-filter.ts";
import { insertCheck } from "#tests/support/pages-fixtures.ts";
import { seedDemo } from "#seed/seed.server.ts";

/*
 * The constraint filters against independent SQL on the same (small demo) database: each
 * expected id list is written here by hand, in a different way from the query under test.
 */

const db = () => getDb().$client;
const ids = (sql: string, ...params: unknown[]) =>
  (
    db()
      .prepare(sql)
      .all(...params) as { id: number }[]
  ).map((r) => r.id);

function filter(query: string): ConstraintFilter {
  const parsed = parseConstraintFilter(new URLSearchParams(query));
  if (!parsed.ok) throw new Error(parsed.errors.join("; "));
  return parsed.filter;
}

const BASE = `select d.id from determinations d, samples s, sites t, calibrations c
  where s.id = d.sample_id and t.id = s.site_id and c.determination_id = d.id and c.is_current = 1
    and c.median_cal_bp is not null and d.status <> 'withdrawn'`;

let box: { w: number; s: number; e: number; n: number };

seedForFile(async () => {
  await seedDemo(getDb(), { size: "small" });
  const b = db().prepare("select min(longitude) w, max(longitude) e, min(latitude) s, max(latitude) n from sites").get() as {
    w: number;
    e: number;
    s: number;
    n: number;
  };
  // The south-western quarter of the demo's extent.
  box = { w: b.w, s: b.s, e: (b.w + b.e) / 2, n: (b.s + b.n) / 2 };
  // Checks of every severity on a few determinations (the review helper's checks fill these in the app).
  const some = ids(`${BASE} order by d.id limit 40`);
  some.forEach((id, i) => insertCheck(getDb(), id, { severity: (["pass", "note", "warning", "conflict"] as const)[i % 4] }));
});

describe("constraint filters select what independent SQL selects", () => {
  it("no filter: every current, calibrated, not withdrawn determination", () => {
    // The small demo withdraws nothing; withdraw one here (this test's database is its own).
    const gone = ids(`${BASE} order by d.id limit 1`)[0]!;
    db().prepare("update determinations set status = 'withdrawn' where id = ?").run(gone);
    const expected = ids(`${BASE} order by d.id`);
    expect(expected.length).toBeGreaterThan(100);
    expect(expected).not.toContain(gone);
    expect(selectionIds(getDb(), filter(""))).toEqual(expected);
    expect(selectionCount(getDb(), filter(""))).toBe(expected.length);
  });

  it("bounding box", () => {
    const f = filter(`bbox=${box.w},${box.s},${box.e},${box.n}`);
    const expected = ids(
      `${BASE} and t.longitude >= ? and t.longitude <= ? and t.latitude >= ? and t.latitude <= ? order by d.id`,
      box.w,
      box.e,
      box.s,
      box.n,
    );
    expect(expected.length).toBeGreaterThan(0);
    expect(selectionIds(getDb(), f)).toEqual(expected);
  });

  it("polygon (a triangle), checked by an independent ray-casting test", () => {
    const tri: [number, number][] = [
      [box.w, box.s],
      [box.e + (box.e - box.w), box.s],
      [box.w, box.n + (box.n - box.s)],
    ];
    const inside = ([x, y]: [number, number]) => {
      let c = false;
      for (let i = 0, j = tri.length - 1; i < tri.length; j = i++) {
        const [xi, yi] = tri[i]!;
        const [xj, yj] = tri[j]!;
        if (yi > y !== yj > y && x < ((xj - xi) * (y - yi)) / (yj - yi) + xi) c = !c;
      }
      return c;
    };
    const rows = db()
      .prepare(`${BASE.replace("select d.id", "select d.id, t.longitude x, t.latitude y")} order by d.id`)
      .all() as {
      id: number;
      x: number;
      y: number;
    }[];
    const expected = rows.filter((r) => inside([r.x, r.y])).map((r) => r.id);
    expect(expected.length).toBeGreaterThan(0);
    expect(expected.length).toBeLessThan(rows.length);
    const f = filter(`polygon=${tri.map(([x, y]) => `${x},${y}`).join(";")}`);
    expect(selectionIds(getDb(), f)).toEqual(expected);
    expect(selectionCount(getDb(), f)).toBe(expected.length);
  });

  it("time window by overlap of the 95.4 % range, and by median; either order", () => {
    const overlap = ids(`${BASE} and not (c.hpd95_to_bp > 11000 or c.hpd95_from_bp < 10000) order by d.id`);
    expect(selectionIds(getDb(), filter("from_cal_bp=10000&to_cal_bp=11000"))).toEqual(overlap);
    expect(selectionIds(getDb(), filter("from_cal_bp=11000&to_cal_bp=10000"))).toEqual(overlap);
    const median = ids(`${BASE} and c.median_cal_bp between 10000 and 11000 order by d.id`);
    expect(selectionIds(getDb(), filter("from_cal_bp=10000&to_cal_bp=11000&time_mode=median"))).toEqual(median);
    expect(overlap.length).toBeGreaterThan(median.length);
  });

  it("methods, kinds, materials, minimum grade and curve", () => {
    expect(selectionIds(getDb(), filter("methods=luminescence"))).toEqual(
      ids(`${BASE} and d.method = 'luminescence' order by d.id`),
    );
    expect(selectionIds(getDb(), filter("kinds=minimum,direct"))).toEqual(
      ids(`${BASE} and (d.constraint_kind = 'minimum' or d.constraint_kind = 'direct') order by d.id`),
    );
    const material = (db().prepare("select material from samples limit 1").get() as { material: string }).material;
    expect(selectionIds(getDb(), filter(`materials=${encodeURIComponent(material)}`))).toEqual(
      ids(`${BASE} and s.material = ? order by d.id`, material),
    );
    const g2 = ids(`${BASE} and d.grade is not null and d.grade >= 2 order by d.id`);
    expect(g2.length).toBeGreaterThan(0);
    expect(selectionIds(getDb(), filter("min_grade=2"))).toEqual(g2);
    expect(selectionIds(getDb(), filter("curve=marine20"))).toEqual(
      ids(`${BASE} and exists (select 1 from curves k where k.id = c.curve_id and k.name = 'marine20') order by d.id`),
    );
  });

  it("flags to exclude read the latest review", () => {
    const flagged = new Set(
      (
        db()
          .prepare(
            `select determination_id id, flags from reviews r1
             where not exists (select 1 from reviews r2 where r2.determination_id = r1.determination_id and r2.id > r1.id)`,
          )
          .all() as { id: number; flags: string }[]
      )
        .filter((r) => (JSON.parse(r.flags) as string[]).some((f) => f === "reworked" || f === "old_carbon"))
        .map((r) => r.id),
    );
    expect(flagged.size).toBeGreaterThan(0);
    const expected = ids(`${BASE} order by d.id`).filter((id) => !flagged.has(id));
    expect(selectionIds(getDb(), filter("exclude_flags=reworked,old_carbon"))).toEqual(expected);
  });

  it("worst check allowed", () => {
    const bad = new Set(ids("select determination_id id from check_results where severity in ('warning', 'conflict')"));
    expect(bad.size).toBeGreaterThan(0);
    const expected = ids(`${BASE} order by d.id`).filter((id) => !bad.has(id));
    expect(selectionIds(getDb(), filter("worst_check=note"))).toEqual(expected);
    expect(selectionIds(getDb(), filter("worst_check=conflict"))).toEqual(ids(`${BASE} order by d.id`));
  });

  it("filters combine with and", () => {
    const expected = ids(
      `${BASE} and t.longitude between ? and ? and t.latitude between ? and ? and c.hpd95_from_bp >= 9000 and c.hpd95_to_bp <= 12000
         and d.grade >= 1 and d.method = 'radiocarbon' order by d.id`,
      box.w,
      box.e,
      box.s,
      box.n,
    );
    const f = filter(`bbox=${box.w},${box.s},${box.e},${box.n}&from_cal_bp=9000&to_cal_bp=12000&min_grade=1&methods=radiocarbon`);
    expect(selectionIds(getDb(), f)).toEqual(expected);
  });
});

describe("parsing a filter", () => {
  it("names every malformed or unknown parameter", () => {
    const r = parseConstraintFilter(
      new URLSearchParams("bbox=1,2,3&min_grade=5&methods=radiocarbon,carbon&colour=red&from_cal_bp=abc"),
    );
    expect(r.ok).toBe(false);
    const errors = r.ok ? [] : r.errors;
    for (const name of ["bbox", "min_grade", "methods", "colour", "from_cal_bp"]) {
      expect(
        errors.some((e) => e.startsWith(`${name}:`)),
        name,
      ).toBe(true);
    }
  });

  it("refuses a box whose west is east of its east", () => {
    const r = parseConstraintFilter(new URLSearchParams("bbox=-60,50,-70,60"));
    expect(r.ok).toBe(false);
  });
});

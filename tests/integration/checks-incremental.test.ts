// The checks after a commit cover exactly what the commit can change: the stored results after
// uploads at places spread over a region are the results a full run over the registry gives, and
// determinations farther than twice the neighbour radius from every new place are not rechecked.
import { describe, expect, it } from "vitest";
import { getDb } from "#app/db/client.server.ts";
import { computeAllChecks, neighbourRadiusKm } from "#app/models/review/check-run.server.ts";
import { createUpload } from "#app/models/submission/uploads/batches.server.ts";
import { commitUpload } from "#app/models/submission/uploads/commit.server.ts";
import { createTestUser } from "#tests/factories.ts";
import { toCsvText, uploadRows, type Cells } from "#tests/support/upload-files.ts";

const db = () => getDb();

/** Rows at sites `spacingDeg` apart in latitude, in three columns of longitude: a region, not a cluster. */
function spreadRows(n: number, prefix: string, seed: number, firstSite: number, spacingDeg: number): Cells[] {
  return uploadRows(n, { prefix, seed }).map((r, i) => {
    const site = firstSite + Math.floor(i / 6);
    return {
      ...r,
      site_name: `${prefix} Spread ${site}`,
      latitude: Number((55 + Math.floor(site / 3) * spacingDeg).toFixed(4)),
      longitude: Number((-72 + (site % 3) * 1.5).toFixed(4)),
    };
  });
}

async function commit(rows: Cells[]) {
  const userId = createTestUser(db(), ["contributor"]).id;
  const { batch } = await createUpload(db(), { userId, fileName: "spread.csv", file: Buffer.from(toCsvText(rows)) });
  commitUpload(db(), batch, "all", { userId });
}

const stored = () => {
  const rows = db()
    .$client.prepare('select determination_id as id, "check", severity, message from check_results order by id, "check", message')
    .all() as { id: number; check: string; severity: string; message: string }[];
  const out = new Map<number, string[]>();
  for (const r of rows) out.set(r.id, [...(out.get(r.id) ?? []), `${r.check}|${r.severity}|${r.message}`]);
  return out;
};

describe("checks after a commit", () => {
  it("leave every stored result as a full run over the registry would write it", async () => {
    await commit(spreadRows(60, "QKA", 11, 0, 0.6));
    // Some new rows at the first upload's places, most at places of their own far from them.
    await commit(spreadRows(36, "QKB", 12, 6, 0.6));
    const full = computeAllChecks(db());
    const expected = new Map<number, string[]>();
    for (const [id, list] of full) {
      expected.set(
        id,
        list.map((r) => `${r.check}|${r.severity}|${r.message}`).sort((a, b) => (a < b ? -1 : a > b ? 1 : 0)),
      );
    }
    const got = stored();
    for (const [id, list] of got)
      got.set(
        id,
        [...list].sort((a, b) => (a < b ? -1 : a > b ? 1 : 0)),
      );
    expect(got).toEqual(expected);
  });

  it("do not recheck determinations far from every new place", async () => {
    await commit(spreadRows(30, "QKC", 13, 0, 3)); // sites 3° (over 300 km) apart
    const far = db().$client.prepare("select max(id) from check_results").pluck().get() as number;
    const before = db()
      .$client.prepare(
        `select c.id from check_results c join determinations d on d.id = c.determination_id
         where d.lab_code like 'QKC-%' and d.lab_code <= 'QKC-00006'`,
      )
      .pluck()
      .all() as number[];
    expect(before.length).toBeGreaterThan(0);
    // New rows at two places on either side of the first site, each over 300 km from it: the first
    // site lies inside their bounding box but outside every neighbourhood, and keeps its result rows.
    expect(2 * neighbourRadiusKm() + 1).toBeLessThan(300);
    const sides = spreadRows(12, "QKD", 14, 0, 3).map((r, i) => ({
      ...r,
      site_name: `QKD Side ${i < 6 ? "south" : "north"}`,
      latitude: i < 6 ? 52 : 58,
      longitude: i < 6 ? -73.5 : -70.5,
    }));
    await commit(sides);
    const after = db()
      .$client.prepare(`select c.id from check_results c where c.id in (${before.map(() => "?").join(",")})`)
      .pluck()
      .all(...before) as number[];
    expect([...after].sort((a, b) => a - b)).toEqual([...before].sort((a, b) => a - b));
    expect(db().$client.prepare("select max(id) from check_results").pluck().get()).toBeGreaterThan(far);
  });
});

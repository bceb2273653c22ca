import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import { describe, expect, it } from "vitest";
import { migrateDatabase, openDatabase } from "#app/db/client.server.ts";
import { CurveImportError, importBundledCurves } from "#app/models/calibration/curves.server.ts";

const sharedCurves = process.env.CURVES_DIR ?? path.resolve(process.cwd(), "../shared/curves");

function freshDb() {
  const file = path.join(fs.mkdtempSync(path.join(os.tmpdir(), "thawline-setup-")), "setup.db");
  const db = openDatabase(file);
  migrateDatabase(db);
  return db;
}

// What `npm run setup` does with the curve folder: import once, recognise a repeat, refuse a
// file that does not reproduce the published spot values (curves/README.md).
describe("bundled curve import", () => {
  it("imports both curves once and recognises a second import", async () => {
    const db = freshDb();
    const first = await importBundledCurves(db, sharedCurves);
    expect(first.map((r) => r.created)).toEqual([true, true]);
    const again = await importBundledCurves(db, sharedCurves);
    expect(again.map((r) => r.created)).toEqual([false, false]);
    const rows = db.$client.prepare("select name, row_count from curves order by name").all();
    // Row counts from curves/README.md: IntCal20 9,501 rows, Marine20 5,501 rows.
    expect(rows).toEqual([
      { name: "intcal20", row_count: 9501 },
      { name: "marine20", row_count: 5501 },
    ]);
  });

  it("refuses a curve file that fails its spot values and writes nothing", async () => {
    const dir = fs.mkdtempSync(path.join(os.tmpdir(), "thawline-curves-"));
    fs.copyFileSync(path.join(sharedCurves, "marine20.csv"), path.join(dir, "marine20.csv"));
    // IntCal20 at 10,000 cal BP reads 8872 ± 21 (curves/README.md); alter that one row.
    const text = fs.readFileSync(path.join(sharedCurves, "intcal20.csv"), "utf8").replace(/^10000,8872,21,/m, "10000,8900,21,");
    fs.writeFileSync(path.join(dir, "intcal20.csv"), text);
    const db = freshDb();
    await expect(importBundledCurves(db, dir)).rejects.toThrow(CurveImportError);
    await expect(importBundledCurves(db, dir)).rejects.toThrow(/IntCal20.*does not match its published values.*10000 cal BP/);
    expect(db.$client.prepare("select count(*) as n from curve_points").get()).toEqual({ n: 0 });
  });

  it("says where it looked when the folder has no curves", async () => {
    const db = freshDb();
    const empty = fs.mkdtempSync(path.join(os.tmpdir(), "thawline-empty-"));
    await expect(importBundledCurves(db, empty)).rejects.toThrow(/Curve file not found: .*intcal20\.csv.*CURVES_DIR/);
  });
});

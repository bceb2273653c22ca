import { describe, expect, it } from "vitest";
import { getDb } from "#app/db/client.server.ts";
import { auditLog, calibrations, determinations, grades, materials, roles } from "#app/db/schema.ts";
import { calibrateDeterminations } from "#app/models/calibration/calibrations.server.ts";
import { insertDetermination } from "#app/models/submission/determinations.server.ts";
import { eq } from "drizzle-orm";
import { createTestDetermination, createTestLab, createTestSample, createTestUser } from "#tests/factories.ts";

// The rules the database itself enforces, whatever code writes to it.
describe("schema rules", () => {
  it("runs SQLite in WAL mode with foreign keys on", () => {
    const sqlite = getDb().$client;
    expect(sqlite.pragma("journal_mode", { simple: true })).toBe("wal");
    expect(sqlite.pragma("foreign_keys", { simple: true })).toBe(1);
  });

  it("ships the rows every installation needs: roles, grades and the controlled materials", () => {
    const db = getDb();
    expect(
      db
        .select()
        .from(roles)
        .all()
        .map((r) => r.name)
        .sort(),
    ).toEqual(["contributor", "editor", "modeller", "reviewer"]);
    expect(
      db
        .select()
        .from(grades)
        .all()
        .map((g) => [g.value, g.name])
        .sort(),
    ).toEqual([
      [0, "rejected"],
      [1, "doubtful"],
      [2, "usable"],
      [3, "secure"],
    ]);
    const names = db
      .select()
      .from(materials)
      .all()
      .map((m) => m.name);
    for (const required of [
      "marine shell",
      "plant macrofossil",
      "wood",
      "peat",
      "bulk sediment",
      "bone",
      "foraminifera",
      "quartz",
      "K-feldspar",
    ]) {
      expect(names).toContain(required);
    }
  });

  it("refuses a second determination with the same lab code", () => {
    const db = getDb();
    const first = createTestDetermination(db);
    expect(() => createTestDetermination(db, { labCode: first.labCode })).toThrow(/UNIQUE/);
  });

  it("refuses references to rows that do not exist", () => {
    const db = getDb();
    expect(() => createTestSample(db, { siteId: 999_999 })).toThrow(/FOREIGN KEY/);
    expect(() => createTestDetermination(db, { grade: 7 })).toThrow(/FOREIGN KEY/);
    const sampleMaterial = () => createTestSample(db, { material: "moon rock" });
    expect(sampleMaterial).toThrow(/FOREIGN KEY/);
    const user = createTestUser(db, ["modeller"]);
    expect(() => db.$client.prepare("insert into user_roles (user_id, role) values (?, 'superuser')").run(user.id)).toThrow(
      /FOREIGN KEY/,
    );
  });

  it("writes a determination and its audit row together, or neither", () => {
    const db = getDb();
    const lab = createTestLab(db);
    const sample = createTestSample(db);
    const auditBefore = db.select().from(auditLog).all().length;
    const detBefore = db.select().from(determinations).all().length;
    expect(() =>
      db.$client.transaction(() => {
        insertDetermination(
          db,
          {
            sampleId: sample.id,
            labId: lab.id,
            labCode: "ROLLBACK-1",
            method: "radiocarbon",
            constraintKind: "minimum",
            c14AgeYr: 9000,
            c14ErrorYr: 40,
            curveName: "intcal20",
          },
          null,
        );
        throw new Error("failure after the insert");
      })(),
    ).toThrow("failure after the insert");
    expect(db.select().from(auditLog).all().length).toBe(auditBefore);
    expect(db.select().from(determinations).all().length).toBe(detBefore);
  });

  it("removes a determination's calibrations with it", () => {
    const db = getDb();
    const d = createTestDetermination(db);
    calibrateDeterminations(db, [d.id]);
    expect(db.select().from(calibrations).where(eq(calibrations.determinationId, d.id)).all()).toHaveLength(1);
    db.$client.prepare("delete from determinations where id = ?").run(d.id);
    expect(db.select().from(calibrations).where(eq(calibrations.determinationId, d.id)).all()).toHaveLength(0);
  });
});

import { describe, expect, it } from "vitest";
import { getDb } from "#app/db/client.server.ts";
import { REGISTRY_VERSION_EXEMPT } from "#app/db/schema.ts";
import { cachedRead, dataVersion } from "#app/models/registry/read-cache.server.ts";
import { createSession } from "#app/auth/session.server.ts";
import { createTestLab, createTestSite } from "#tests/factories.ts";
import { personWithSession } from "#tests/support/auth.ts";

/*
 * The registry's version counter (migration 0015) and the read cache built on it: a write to a
 * registry table moves it, from this connection or another; bookkeeping writes (sessions, jobs'
 * progress, rate limits, audit lines) do not, so a long commit's progress reports leave cached
 * reads alone. Every table must be either counted or named exempt.
 */

const tablesOf = () =>
  (getDb().$client.prepare("select name from sqlite_master where type = 'table'").pluck().all() as string[]).sort();

describe("registry_version", () => {
  it("every table is either counted by three triggers or named exempt in db/schema.ts", () => {
    const triggers = new Set(
      getDb().$client.prepare("select name from sqlite_master where type = 'trigger'").pluck().all() as string[],
    );
    const exempt = new Set<string>(REGISTRY_VERSION_EXEMPT);
    const uncounted = tablesOf().filter(
      (t) => !exempt.has(t) && !["insert", "update", "delete"].every((op) => triggers.has(`registry_version_${t}_${op}`)),
    );
    expect(uncounted).toEqual([]);
    for (const table of ["determinations", "sites", "calibrations", "grades", "check_results", "releases"]) {
      expect(exempt.has(table)).toBe(false);
    }
  });

  it("moves on inserts, updates and deletes in registry tables, also when another connection writes", async () => {
    const db = getDb();
    const v0 = dataVersion(db);
    const site = createTestSite(db, { name: "Version Probe Point" });
    const v1 = dataVersion(db);
    expect(v1).not.toBe(v0);
    db.$client.prepare("update sites set name = 'Version Probe Point II' where id = ?").run(site.id);
    const v2 = dataVersion(db);
    expect(v2).not.toBe(v1);

    const Database = (await import("better-sqlite3")).default;
    const other = new Database(db.$client.name);
    try {
      other.prepare("delete from sites where id = ?").run(site.id);
    } finally {
      other.close();
    }
    expect(dataVersion(db)).not.toBe(v2);
  });

  it("stays put when only sessions, jobs, rate limits or the audit log are written", async () => {
    const db = getDb();
    const { id } = await personWithSession(["modeller"]);
    const before = dataVersion(db);
    await createSession(id, new Request("http://app.test/"));
    db.$client.prepare("insert into jobs (kind, status, total) values ('probe', 'running', 10)").run();
    db.$client.prepare("update jobs set progress = progress + 1 where kind = 'probe'").run();
    db.$client.prepare("insert into rate_limits (key, window_start, count) values ('probe', 0, 1)").run();
    db.$client.prepare("insert into audit_log (action, entity) values ('probe.test', 'probe')").run();
    expect(dataVersion(db)).toBe(before);
  });
});

describe("cachedRead", () => {
  it("computes once per registry version and again after a registry write, not after a job's progress", () => {
    const db = getDb();
    let computed = 0;
    const labs = () =>
      cachedRead(db, "registry-version-test:labs", () => {
        computed++;
        return db.$client.prepare("select name from labs order by name").pluck().all() as string[];
      });
    const first = labs();
    expect(labs()).toBe(first);
    expect(computed).toBe(1);

    db.$client.prepare("insert into jobs (kind, status, total) values ('probe', 'running', 10)").run();
    expect(labs()).toBe(first);
    expect(computed).toBe(1);

    createTestLab(db, { name: "Cache Probe Laboratory", codePrefix: "CPQ" });
    const after = labs();
    expect(computed).toBe(2);
    expect(after).toContain("Cache Probe Laboratory");
    expect(first).not.toContain("Cache Probe Laboratory");
  });
});

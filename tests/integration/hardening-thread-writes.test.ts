import { eq } from "drizzle-orm";
import { afterAll, describe, expect, it } from "vitest";
import { readOutbox } from "#seed/mail-fake.ts";
import { getDb } from "#app/db/client.server.ts";
import { auditLog, sessions } from "#app/db/schema.ts";
import { writeWhenFree, WriteLockBusy } from "#app/db/write-when-free.server.ts";
import { readMessageText } from "#app/mail/templates.server.ts";
import { createUser } from "#app/models/accounts/users.server.ts";
import * as signIn from "#app/routes/account/sign-in.tsx";
import * as signOut from "#app/routes/account/sign-out.ts";
import * as curveWindow from "#app/routes/resources/curve-window.ts";
import { resetRateLimits } from "#app/utils/rate-limit.server.ts";
import { args, CookieJar, get, post, run } from "#tests/support/auth.ts";
import { useMailFake } from "#tests/support/mail-fake.ts";
import { holdWriteLock, longestPause } from "#tests/support/write-lock.ts";
import { contributorWithToken, determinationCount, uploadedSheet } from "#tests/support/api-uploads.ts";
import * as commitApi from "#app/routes/api/v1/uploads.commit.ts";
import { closeWorkers } from "#app/workers/pool.server.ts";
import { ORIGIN } from "#tests/support/auth.ts";

/*
 * Issue 14, items 11 and 12: the server thread's own writes while another connection (the writer
 * thread, during a long commit) holds the write lock. They waited on better-sqlite3's synchronous
 * busy timeout: every request of the server stopped for up to 5 s, and then the write failed
 * ("database is locked"). Rate limits are now counted in memory, and the writes a sign-in and a
 * sign-out must make wait for the lock without holding up the thread.
 */

const fake = useMailFake("thread-writes");
afterAll(() => closeWorkers());
let n = 0;

function person() {
  n += 1;
  const email = `locked${n}@example.org`;
  return { email, id: createUser(getDb(), { email, name: `Locked ${n}`, roles: ["contributor"] }) };
}

async function requestCode(email: string, jar = new CookieJar()) {
  const outcome = await run(() =>
    signIn.action(
      args(post("/sign-in", { intent: "request", email, website: "" }, { headers: { "X-Thawline-Client": `192.0.2.${n}` } })),
    ),
  );
  jar.take(new Response(null, { headers: outcome.headers }));
  const message = readOutbox(fake.outboxDir).filter((m) => m.to.includes(email))[0];
  expect(message, `a message to ${email}`).toBeDefined();
  return { jar, status: outcome.status, code: readMessageText(message!.text ?? "").code! };
}

async function enterCode(jar: CookieJar, code: string) {
  const outcome = await run(() =>
    signIn.action(
      args(post("/sign-in", { intent: "verify", code }, { cookie: jar.header(), headers: { "User-Agent": "vitest" } })),
    ),
  );
  jar.take(new Response(null, { headers: outcome.headers }));
  return outcome;
}

const file = () => getDb().$client.name;

describe("the server thread's writes while another connection holds the write lock", () => {
  it("a rate-limited GET answers at once (its counter is not a database write)", async () => {
    const lock = await holdWriteLock(file(), 3_000);
    const { value, ms, pauseMs } = await longestPause(() =>
      run(() => curveWindow.loader(args(get("/api/curve-window?curve=intcal20&from=9000&to=8000")))),
    );
    expect(value.status).toBe(200);
    // Before, the counter's UPSERT waited for the lock: ≈ 3 s here, and a 500 past 5 s.
    expect(ms).toBeLessThan(1_000);
    expect(pauseMs).toBeLessThan(1_000);
    await lock.released;
  });

  it("a whole sign-in (code request, then the code) waits for the lock without stopping the thread", async () => {
    const p = person();
    const lock = await holdWriteLock(file(), 1_500);
    const { value, ms, pauseMs } = await longestPause(async () => {
      const asked = await requestCode(p.email);
      expect(asked.status).toBe(302);
      return enterCode(asked.jar, asked.code);
    });
    await lock.released;
    expect(value.status).toBe(302);
    expect(value.location).toBe("/");
    expect(getDb().select().from(sessions).where(eq(sessions.userId, p.id)).all()).toHaveLength(1);
    // The sign-in finished once the lock was free; the thread turned all the while.
    expect(ms).toBeGreaterThan(1_000);
    expect(pauseMs).toBeLessThan(300);
  });

  it("a sign-out waits for the lock without stopping the thread", async () => {
    const p = person();
    const asked = await requestCode(p.email);
    await enterCode(asked.jar, asked.code);
    const lock = await holdWriteLock(file(), 1_500);
    const { value, pauseMs } = await longestPause(() =>
      run(() => signOut.action(args(post("/sign-out", {}, { cookie: asked.jar.header() })))),
    );
    await lock.released;
    expect(value.status).toBe(302);
    expect(getDb().select().from(sessions).where(eq(sessions.userId, p.id)).all()).toHaveLength(0);
    expect(getDb().select().from(auditLog).where(eq(auditLog.action, "auth.sign_out")).all()).toHaveLength(1);
    expect(pauseMs).toBeLessThan(300);
  });

  it("past its wait, a write is refused with a 503 error instead of freezing the thread", async () => {
    const lock = await holdWriteLock(file(), 2_000);
    const { value, pauseMs } = await longestPause(() =>
      writeWhenFree(getDb(), () => getDb().$client.prepare("insert into rate_limits values ('x', 1, 1)").run(), {
        waitMs: 300,
      }).then(
        () => null,
        (e: unknown) => e,
      ),
    );
    expect(value).toBeInstanceOf(WriteLockBusy);
    expect((value as WriteLockBusy).status).toBe(503);
    expect(pauseMs).toBeLessThan(200);
    await lock.released;
  });
});

describe("a used sign-in code", () => {
  it("stays used after a restart, although the counters in memory are gone", async () => {
    const p = person();
    const asked = await requestCode(p.email);
    // A copy of the browser's cookies, taken before the code is used.
    const copy = new CookieJar();
    for (const name of asked.jar.names()) copy.set(name, asked.jar.get(name)!);
    expect((await enterCode(asked.jar, asked.code)).location).toBe("/");
    resetRateLimits();
    const again = await enterCode(copy, asked.code);
    expect(again.location).toBe("/sign-in");
    expect(copy.get("thawline_session")).toBeUndefined();
    expect(getDb().select().from(sessions).where(eq(sessions.userId, p.id)).all()).toHaveLength(1);
  });
});

describe("uploads and commits while another commit holds the write lock", () => {
  it(
    "an upload waits for the lock in its thread (it failed past 5 s), and a commit's job row without stopping this one",
    { timeout: 120_000 },
    async () => {
      const person = contributorWithToken();
      const id = await uploadedSheet(20, "ZT1Q", person.token);
      // Longer than the 5 s a connection waits by default; the upload's thread (started above) stores the batch meanwhile.
      let lock = await holdWriteLock(file(), 7_000);
      const t0 = performance.now();
      await uploadedSheet(20, "ZT2Q", person.token);
      expect(performance.now() - t0).toBeGreaterThan(5_000);
      await lock.released;
      const before = determinationCount();
      lock = await holdWriteLock(file(), 1_500);
      const commit = new Request(`${ORIGIN}/api/v1/uploads/${id}/commit`, {
        method: "POST",
        body: JSON.stringify({ mode: "all" }),
        headers: { "Content-Type": "application/json", Authorization: `Bearer ${person.token}` },
      });
      const { value, pauseMs } = await longestPause(() => run(() => commitApi.action(args(commit, { uploadId: id }))));
      await lock.released;
      expect(value.status).toBe(200);
      expect(determinationCount()).toBe(before + 20);
      // The commit's job row is written by this thread: it waited without holding the thread up.
      expect(pauseMs).toBeLessThan(300);
    },
  );
});

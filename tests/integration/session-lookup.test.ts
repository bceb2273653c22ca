import { expect, it } from "vitest";
import { getDb } from "#app/db/client.server.ts";
import { getOptionalUser } from "#app/auth/session.server.ts";
import { personWithSession } from "#tests/support/auth.ts";

/*
 * A page's loaders share one session lookup per read request (root, area layout and page all ask);
 * each caller gets its own copy, and a write request looks again at every call.
 */

const request = (cookie: string, method = "GET") =>
  new Request("http://localhost/explore", { method, headers: { Cookie: cookie } });

it("a read request looks the session up once: later calls on it agree, and get their own copies", async () => {
  const { id, cookie } = await personWithSession(["modeller", "reviewer"]);
  const req = request(cookie);
  const first = await getOptionalUser(req);
  expect(first?.id).toBe(id);
  first!.roles.push("editor");
  first!.name = "Changed by a caller";
  const second = await getOptionalUser(req);
  expect(second?.roles.sort()).toEqual(["modeller", "reviewer"]);
  expect(second?.name).not.toBe("Changed by a caller");
});

it("a new request sees a deactivation at once; a write request sees it between two calls", async () => {
  const { id, cookie } = await personWithSession(["contributor"]);
  const post = request(cookie, "POST");
  expect((await getOptionalUser(post))?.id).toBe(id);
  expect((await getOptionalUser(request(cookie)))?.id).toBe(id);
  getDb().$client.prepare("update users set active = 0 where id = ?").run(id);
  expect(await getOptionalUser(post)).toBeNull();
  expect(await getOptionalUser(request(cookie))).toBeNull();
});

it("an expired session or a cookie without a valid signature is nobody", async () => {
  const { sessionId, cookie } = await personWithSession(["modeller"]);
  expect(await getOptionalUser(request(cookie.replace(/.$/, (c) => (c === "A" ? "B" : "A"))))).toBeNull();
  getDb()
    .$client.prepare("update sessions set expires_at = ? where id = ?")
    .run(Date.now() - 1000, sessionId);
  expect(await getOptionalUser(request(cookie))).toBeNull();
});

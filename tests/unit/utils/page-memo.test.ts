import { describe, expect, test } from "vitest";
import { keepRender, keptRender, pageMemoStats, renderKey, type RenderInputs } from "#app/utils/page-memo.server.ts";

const base: RenderInputs = {
  url: "http://app.test/explore?page=2",
  method: "GET",
  statusCode: 200,
  loaderData: { root: { user: { id: 1, name: "Ada Quill" } }, "routes/explore": { rows: [1, 2, 3] } },
  actionData: null,
  errors: null,
  nonce: "bm9uY2Ux",
};

describe("renderKey", () => {
  test("the same address and loader data give the same key; any difference gives another", () => {
    const key = renderKey(base);
    expect(key).toBeTruthy();
    expect(renderKey({ ...base, nonce: "b3RoZXI=" })).toBe(key); // the nonce is written in, not part of the key
    expect(renderKey({ ...base, url: "http://app.test/explore?page=3" })).not.toBe(key);
    expect(renderKey({ ...base, url: "http://app.test/explore/?page=2" })).not.toBe(key);
    expect(renderKey({ ...base, loaderData: { ...base.loaderData, root: { user: { id: 2, name: "Ada Quill" } } } })).not.toBe(
      key,
    );
  });

  test("shapes plain JSON would blur stay apart: Map, Set, undefined, an empty object", () => {
    const keys = [{ v: {} }, { v: new Map([["a", 1]]) }, { v: new Set([1]) }, { v: undefined }, {}, { v: "\u0000undefined" }].map(
      (v) => renderKey({ ...base, loaderData: v as Record<string, unknown> }),
    );
    // "\u0000undefined" as a string is the one collision the marker allows; everything else differs.
    expect(new Set(keys.slice(0, 5)).size).toBe(5);
  });

  test.each([
    ["a write (POST)", { method: "POST" }],
    ["a status other than 200", { statusCode: 404 }],
    ["an error render", { errors: { root: new Error("x") } }],
    ["an action's answer", { actionData: { "routes/x": { ok: true } } }],
    ["no nonce (development server)", { nonce: "" }],
    ["deferred data", { loaderData: { "routes/x": { later: Promise.resolve(1) } } }],
    ["a function in the data", { loaderData: { "routes/x": { f: () => 1 } } }],
  ])("is not kept: %s", (_what, change) => {
    expect(renderKey({ ...base, ...(change as Partial<RenderInputs>) })).toBeNull();
  });
});

describe("keptRender", () => {
  test("answers the kept page with the new nonce in every place the old one stood", () => {
    const key = renderKey({ ...base, url: "http://app.test/nonce-case" })!;
    const html = `<script nonce="bm9uY2Ux">a</script><p>Ådne’s café</p><script nonce="bm9uY2Ux">b</script>`;
    expect(keptRender(key, "bmV3")).toBeNull();
    keepRender(key, html, "bm9uY2Ux");
    const again = Buffer.from(keptRender(key, "bmV3MQ==")!).toString("utf8");
    expect(again).toBe(`<script nonce="bmV3MQ==">a</script><p>Ådne’s café</p><script nonce="bmV3MQ==">b</script>`);
    expect(again).not.toContain("bm9uY2Ux");
  });

  test("holds at most its byte budget: the least recently used go first", () => {
    const big = "x".repeat(4 * 1024 * 1024); // 4 MB each; the budget is 48 MB
    const keys = Array.from({ length: 20 }, (_, i) => renderKey({ ...base, url: `http://app.test/big/${i}` })!);
    keys.forEach((key) => keepRender(key, `<p nonce="n0">${big}</p>`, "n0"));
    const stats = pageMemoStats();
    expect(stats.bytes).toBeLessThanOrEqual(48 * 1024 * 1024);
    expect(keptRender(keys[0]!, "n1")).toBeNull();
    expect(keptRender(keys[19]!, "n1")).not.toBeNull();
  });
});

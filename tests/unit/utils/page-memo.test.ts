import { describe, expect, test } from "vitest";
import { keepRender, keptRender, pageMemoStats, renderKey, settledText, type RenderInputs } from "#app/utils/page-memo.server.ts";

const base: RenderInputs = {
  url: "http://app.test/explore?page=2",
  method: "GET",
  statusCode: 200,
  dataText: '[{"_1":2},"loaderData",{"root":{"user":{"id":1,"name":"Ada Quill"}}}]\n',
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
    expect(renderKey({ ...base, dataText: base.dataText!.replace('"id":1', '"id":2') })).not.toBe(key);
  });

  test.each([
    ["a write (POST)", { method: "POST" }],
    ["a status other than 200", { statusCode: 404 }],
    ["an error render", { errors: { root: new Error("x") } }],
    ["an action's answer", { actionData: { "routes/x": { ok: true } } }],
    ["no nonce (development server)", { nonce: "" }],
    ["deferred data (the hydration stream still open)", { dataText: null }],
  ])("is not kept: %s", (_what, change) => {
    expect(renderKey({ ...base, ...(change as Partial<RenderInputs>) })).toBeNull();
  });
});

describe("keptRender", () => {
  test("answers the kept page with the new nonce in every place the old one stood", async () => {
    const key = renderKey({ ...base, url: "http://app.test/nonce-case" })!;
    const html = `<script nonce="bm9uY2Ux">a</script><p>Ådne’s café</p><script nonce="bm9uY2Ux">b</script>`;
    expect(keptRender(key, "bmV3")).toBeNull();
    keepRender(key, html, "bm9uY2Ux");
    const again = await new Response(keptRender(key, "bmV3MQ==")!).text();
    expect(again).toBe(`<script nonce="bmV3MQ==">a</script><p>Ådne’s café</p><script nonce="bmV3MQ==">b</script>`);
    expect(again).not.toContain("bm9uY2Ux");
    // The kept pieces are sent, not copied: reading one answer leaves the next one whole.
    expect(await new Response(keptRender(key, "bmV3Mg==")!).text()).toBe(again.replaceAll("bmV3MQ==", "bmV3Mg=="));
  });

  test("large and small pieces come out in order, whole, with every nonce replaced", async () => {
    const key = renderKey({ ...base, url: "http://app.test/mixed" })!;
    const big = "é".repeat(20_000); // 40 KB: sent as kept
    const html = `<a nonce="n0">${big}</a><b nonce="n0">x</b><c nonce="n0">${big}y</c><d nonce="n0">`;
    keepRender(key, html, "n0");
    const stream = keptRender(key, "NEW")!;
    const chunks: Uint8Array[] = [];
    for await (const chunk of stream as unknown as AsyncIterable<Uint8Array>) chunks.push(chunk);
    expect(Buffer.concat(chunks).toString("utf8")).toBe(html.replaceAll("n0", "NEW"));
    expect(chunks.length).toBeLessThan(html.split("n0").length * 2 - 1); // small pieces were joined
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

describe("settledText", () => {
  const encoder = new TextEncoder();
  const readAll = async (stream: ReadableStream<Uint8Array>) => {
    let text = "";
    const decoder = new TextDecoder();
    for await (const chunk of stream as unknown as AsyncIterable<Uint8Array>) text += decoder.decode(chunk, { stream: true });
    return text + decoder.decode();
  };

  test("a stream complete at once: its whole text, and the same bytes again for the render", async () => {
    const stream = new ReadableStream<Uint8Array>({
      start(controller) {
        controller.enqueue(encoder.encode('[{"a":"Ådne’s'));
        controller.enqueue(encoder.encode(' café"}]\n'));
        controller.close();
      },
    });
    const { text, rest } = await settledText(stream);
    expect(text).toBe('[{"a":"Ådne’s café"}]\n');
    expect(await readAll(rest)).toBe(text);
  });

  test("a stream still waiting for deferred data: no text, and the render still gets every byte", async () => {
    let finish!: () => void;
    const stream = new ReadableStream<Uint8Array>({
      start(controller) {
        controller.enqueue(encoder.encode("[first]\n"));
        finish = () => {
          controller.enqueue(encoder.encode("P1:[later]\n"));
          controller.close();
        };
      },
    });
    const { text, rest } = await settledText(stream);
    expect(text).toBeNull();
    setTimeout(finish, 20);
    expect(await readAll(rest)).toBe("[first]\nP1:[later]\n");
  });
});

// Streams a multipart body lazily and counts the bytes the server pulls.

import { ORIGIN } from "#tests/support/auth.ts";

const BOUNDARY = "----thawlinetestboundary";
const enc = new TextEncoder();

export type Part =
  { name: string; filename?: string; body: Uint8Array | string } | { name: string; filename: string; endless: true };

/** A multipart body streamed part by part; an `endless` file never ends. `pulled` counts bytes read. */
export function streamingRequest(parts: Part[], headers: Record<string, string> = {}, path = "/api/v1/uploads") {
  const counter = { pulled: 0 };
  const chunk = new Uint8Array(64 * 1024).fill(0x61);
  let i = 0;
  let inEndless = false;
  const body = new ReadableStream<Uint8Array>({
    pull(controller) {
      const send = (b: Uint8Array) => {
        counter.pulled += b.length;
        controller.enqueue(b);
      };
      if (inEndless) return send(chunk);
      const part = parts[i++];
      if (!part) {
        send(enc.encode(`--${BOUNDARY}--\r\n`));
        return controller.close();
      }
      const disposition = `form-data; name="${part.name}"${"filename" in part && part.filename ? `; filename="${part.filename}"` : ""}`;
      send(enc.encode(`--${BOUNDARY}\r\nContent-Disposition: ${disposition}\r\n\r\n`));
      if ("endless" in part) {
        inEndless = true;
        return;
      }
      send(typeof part.body === "string" ? enc.encode(part.body) : part.body);
      send(enc.encode("\r\n"));
    },
  });
  const request = new Request(`${ORIGIN}${path}`, {
    method: "POST",
    body,
    // @ts-expect-error Node's fetch needs duplex for a streamed body
    duplex: "half",
    headers: { "Content-Type": `multipart/form-data; boundary=${BOUNDARY}`, ...headers },
  });
  return { request, counter };
}

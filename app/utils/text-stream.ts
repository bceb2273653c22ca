// A ReadableStream of UTF-8 text pulled from a generator, so a large download is written piece by
// piece as the client reads it instead of being built in memory as one string. Client-safe.

const CHUNK_CHARS = 64 * 1024;

/**
 * Streams the strings a generator yields, gathered into chunks of about 64 kB; a piece already
 * encoded (UTF-8 bytes the generator will not touch again) passes through as it is. The generator
 * runs only when the reader asks for more (so database reads inside it happen one batch at a
 * time) and is closed if the reader cancels.
 */
export function textStream(pieces: Iterator<string | Uint8Array>): ReadableStream<Uint8Array> {
  const encoder = new TextEncoder();
  return new ReadableStream<Uint8Array>({
    pull(controller) {
      let buffer = "";
      let sent = 0;
      while (buffer.length + sent < CHUNK_CHARS) {
        const next = pieces.next();
        if (next.done) {
          if (buffer) controller.enqueue(encoder.encode(buffer));
          controller.close();
          return;
        }
        if (typeof next.value === "string") buffer += next.value;
        else {
          if (buffer) controller.enqueue(encoder.encode(buffer));
          buffer = "";
          controller.enqueue(next.value);
          sent += next.value.byteLength;
        }
      }
      if (buffer) controller.enqueue(encoder.encode(buffer));
    },
    cancel() {
      pieces.return?.(undefined);
    },
  });
}

/** Reads a whole stream back into a string (tests, and small callers that need the text). */
export async function streamToText(stream: ReadableStream<Uint8Array>): Promise<string> {
  return new Response(stream).text();
}

// A ReadableStream of UTF-8 text pulled from a generator, so a large download is written piece by
// piece as the client reads it instead of being built in memory as one string. Node only (Buffer):
// the downloads are written on the server.

const CHUNK_BYTES = 64 * 1024;

/**
 * Streams the strings a generator yields, written as UTF-8 into chunks of about 64 kB; a piece
 * already encoded (UTF-8 bytes the generator will not touch again) passes through as it is. The
 * generator runs only when the reader asks for more (so database reads inside it happen one
 * batch at a time) and is closed if the reader cancels.
 */
export function textStream(pieces: Iterator<string | Uint8Array>): ReadableStream<Uint8Array> {
  // Strings are written into one reused buffer (Buffer.write takes the fast path for text; a
  // string of many small concatenated pieces is never flattened as a whole); each chunk sent is
  // a copy of its filled part.
  const buffer = Buffer.allocUnsafe(CHUNK_BYTES);
  return new ReadableStream<Uint8Array>({
    pull(controller) {
      let at = 0;
      let sent = 0;
      const flush = () => {
        if (at > 0) controller.enqueue(new Uint8Array(buffer.subarray(0, at)));
        sent += at;
        at = 0;
      };
      while (sent < CHUNK_BYTES) {
        const next = pieces.next();
        if (next.done) {
          flush();
          controller.close();
          return;
        }
        const piece = next.value;
        if (typeof piece !== "string") {
          flush();
          controller.enqueue(piece);
          sent += piece.byteLength;
        } else if (piece.length * 3 <= CHUNK_BYTES - at) {
          // At most three bytes per UTF-16 unit, so the piece fits whole.
          at += buffer.write(piece, at, "utf8");
        } else {
          flush();
          if (piece.length * 3 <= CHUNK_BYTES) at = buffer.write(piece, 0, "utf8");
          else {
            const bytes = Buffer.from(piece, "utf8");
            controller.enqueue(bytes);
            sent += bytes.byteLength;
          }
        }
      }
      flush();
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

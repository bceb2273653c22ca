import { mkdtempSync, readdirSync, readFileSync, rmSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { afterEach, beforeEach, describe, expect, it } from "vitest";
import { FileIntakeError, receiveFiles, withReceivedFiles } from "#app/models/files/intake.server.ts";
import { createToken } from "#app/models/accounts/tokens.server.ts";
import { getDb } from "#app/db/client.server.ts";
import * as uploadsApi from "#app/routes/api/v1/uploads.ts";
import { createTestUser } from "#tests/factories.ts";
import { args, ORIGIN, run } from "#tests/support/auth.ts";
import { type Part, streamingRequest } from "#tests/support/streaming-request.ts";

/*
 * Issue 14, item 9 and the file intake: limits are enforced while the body streams in. A body is
 * produced lazily here and the bytes the server pulls are counted: past the limit it stops
 * reading (request.formData() would read all of it first), answers 413, and keeps no file.
 */

let root: string;
beforeEach(() => {
  root = mkdtempSync(join(tmpdir(), "intake-test-"));
});
afterEach(() => rmSync(root, { recursive: true, force: true }));

describe("file intake", () => {
  it("streams files to a private folder, sniffs them, keeps fields, and removes the folder after", async () => {
    const { request } = streamingRequest([
      { name: "note", body: "first run" },
      { name: "file", filename: "../../etc/a.csv", body: "lab_code,age\nAB-1,1200\n" },
      { name: "file", filename: "b.geojson", body: '{"type":"FeatureCollection","features":[]}' },
    ]);
    let dir = "";
    const seen = await withReceivedFiles(request, { maxFileBytes: 1024, maxFiles: 2, tempRoot: root }, (got) => {
      dir = got.dir;
      expect(readdirSync(dir)).toHaveLength(2);
      expect(readFileSync(got.files[0]!.path, "utf8")).toBe("lab_code,age\nAB-1,1200\n");
      return got.files.map((f) => [f.name, f.size, f.sniffed.kind, got.fields.get("note")]);
    });
    expect(seen).toEqual([
      ["a.csv", 23, "csv", "first run"],
      ["b.geojson", 42, "geojson", "first run"],
    ]);
    expect(readdirSync(root)).toEqual([]);
  });

  it("stops reading an endless file just past the limit: 413, nothing kept", async () => {
    const { request, counter } = streamingRequest([{ name: "file", filename: "huge.csv", endless: true }]);
    const limit = 1024 * 1024;
    const error = await receiveFiles(request, { maxFileBytes: limit, tempRoot: root }).catch((e: unknown) => e);
    expect(error).toBeInstanceOf(FileIntakeError);
    expect((error as FileIntakeError).status).toBe(413);
    expect((error as FileIntakeError).message).toContain("huge.csv: the file is over the size limit; the limit is 1.0 MB");
    expect(counter.pulled).toBeLessThan(limit + 512 * 1024);
    expect(readdirSync(root)).toEqual([]);
  });

  it("refuses too many files, an over-long field, a kind not taken, an empty file and a body that is not multipart", async () => {
    const cases: [Part[], Parameters<typeof receiveFiles>[1], number, RegExp][] = [
      [
        [
          { name: "file", filename: "a.csv", body: "a\n1\n" },
          { name: "file", filename: "b.csv", body: "a\n1\n" },
        ],
        { maxFileBytes: 100 },
        413,
        /At most 1 file/,
      ],
      [[{ name: "email", body: "x".repeat(5000) }], { maxFileBytes: 100, maxFieldBytes: 1000 }, 413, /"email" is longer than/],
      [
        [{ name: "file", filename: "a.nc", body: "%PDF-1.4 x" }],
        { maxFileBytes: 100, accept: ["netcdf3", "hdf5"] },
        400,
        /looks like a PDF/,
      ],
      [[{ name: "file", filename: "e.csv", body: "" }], { maxFileBytes: 100 }, 400, /e.csv: the file is empty/],
      [[{ name: "upload", filename: "a.csv", body: "a\n" }], { maxFileBytes: 100 }, 400, /send it in "file"/],
      [[{ name: "note", body: "no file" }], { maxFileBytes: 100 }, 400, /Choose a file/],
    ];
    for (const [parts, options, status, message] of cases) {
      const { request } = streamingRequest(parts);
      const error = (await receiveFiles(request, { ...options, tempRoot: root }).catch((e: unknown) => e)) as FileIntakeError;
      expect(error, String(message)).toBeInstanceOf(FileIntakeError);
      expect([error.status, error.message]).toEqual([status, expect.stringMatching(message)]);
      expect(readdirSync(root)).toEqual([]);
    }
    const plain = new Request(`${ORIGIN}/x`, { method: "POST", body: "a=1", headers: { "Content-Type": "text/plain" } });
    expect(((await receiveFiles(plain, { maxFileBytes: 10 }).catch((e: unknown) => e)) as FileIntakeError).status).toBe(415);
  });

  it("the upload API stops reading a chunked body past UPLOAD_MAX_BYTES and answers 413 (it read all of it before)", async () => {
    const user = createTestUser(getDb(), ["contributor"]);
    const token = createToken(getDb(), user.id, "test", { actorId: user.id }).token;
    const { request, counter } = streamingRequest([{ name: "file", filename: "endless.csv", endless: true }], {
      Authorization: `Bearer ${token}`,
    });
    // The endless body would never end: without a streaming limit this test times out.
    const res = await run(() => uploadsApi.action(args(request)));
    expect(res.status).toBe(413);
    expect((res.data as { error: string }).error).toContain("the limit is 10.0 MB");
    expect(counter.pulled).toBeLessThan(11 * 1024 * 1024);
  });
});

describe("case 9: the sign-in form caps what it echoes back", () => {
  it("a 15 KB address is refused with an answer that does not carry it (it came back twice before)", async () => {
    const signIn = await import("#app/routes/account/sign-in.tsx");
    const long = `${"a".repeat(15_000)}@example.org`;
    const body = new URLSearchParams({ intent: "request", email: long });
    const res = await run(() =>
      signIn.action(
        args(
          new Request(`${ORIGIN}/sign-in`, {
            method: "POST",
            body,
            headers: { "Content-Type": "application/x-www-form-urlencoded" },
          }),
        ),
      ),
    );
    expect(res.status).toBe(400);
    expect(JSON.stringify(res.data).length).toBeLessThan(2000);
  });
});

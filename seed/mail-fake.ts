/*
 * A local stand-in for the hosted mail API, speaking the part of it Thawline's SDK uses:
 * `POST /emails` with a JSON message and `Authorization: Bearer re_…`, answered `{ "id": "…" }`.
 * Every accepted message is kept as one JSON file in the outbox folder; `GET /emails` lists them
 * newest first and `GET /emails/:id` returns one (for tests and the dev outbox page; these two
 * need no key, the fake only ever listens on the loopback address).
 *
 * Standalone: `npx tsx seed/mail-fake.ts` listens on 127.0.0.1:MAIL_FAKE_PORT (default 3025) and
 * keeps messages in MAIL_OUTBOX_DIR (default data/outbox).
 */
import crypto from "node:crypto";
import fs from "node:fs";
import http from "node:http";
import path from "node:path";
import { pathToFileURL } from "node:url";

export type OutboxMessage = {
  object: "email";
  id: string;
  created_at: string;
  from: string;
  to: string[];
  cc: string[];
  bcc: string[];
  reply_to: string[];
  subject: string;
  text: string | null;
  html: string | null;
  tags: { name: string; value: string }[];
  headers: Record<string, string>;
};

const MAX_BODY_BYTES = 5 * 1024 * 1024;

function send(res: http.ServerResponse, status: number, body: unknown) {
  const text = JSON.stringify(body);
  res.writeHead(status, { "Content-Type": "application/json; charset=utf-8", "Content-Length": Buffer.byteLength(text) });
  res.end(text);
}

function apiError(res: http.ServerResponse, status: number, name: string, message: string) {
  send(res, status, { statusCode: status, name, message });
}

function list(value: unknown): string[] {
  if (value == null) return [];
  return (Array.isArray(value) ? value : [value]).filter((v): v is string => typeof v === "string");
}

/** Reads every message in the outbox folder, newest first. */
export function readOutbox(outboxDir: string): OutboxMessage[] {
  if (!fs.existsSync(outboxDir)) return [];
  return fs
    .readdirSync(outboxDir)
    .filter((f) => f.endsWith(".json"))
    .sort()
    .reverse()
    .map((f) => JSON.parse(fs.readFileSync(path.join(outboxDir, f), "utf8")) as OutboxMessage);
}

function readBody(req: http.IncomingMessage): Promise<string | null> {
  return new Promise((resolve, reject) => {
    const chunks: Buffer[] = [];
    let size = 0;
    req.on("data", (chunk: Buffer) => {
      size += chunk.length;
      if (size > MAX_BODY_BYTES) {
        resolve(null);
        req.destroy();
        return;
      }
      chunks.push(chunk);
    });
    req.on("end", () => resolve(Buffer.concat(chunks).toString("utf8")));
    req.on("error", reject);
  });
}

export async function startMailFake(options: {
  port?: number;
  outboxDir: string;
  host?: string;
}): Promise<{ url: string; close: () => Promise<void> }> {
  const outboxDir = path.resolve(options.outboxDir);
  const host = options.host ?? "127.0.0.1";
  fs.mkdirSync(outboxDir, { recursive: true });
  let sequence = 0;

  const server = http.createServer(async (req, res) => {
    try {
      const url = new URL(req.url ?? "/", "http://mail-fake");

      if (req.method === "POST" && url.pathname === "/emails") {
        // Sending needs a key, as with the hosted service; reading the outbox (below) is a local aid.
        const key = (req.headers.authorization ?? "").match(/^Bearer\s+(\S+)$/)?.[1];
        if (!key) return apiError(res, 401, "missing_api_key", "Missing API key in the authorization header.");
        if (!key.startsWith("re_")) return apiError(res, 403, "invalid_api_key", "API key is invalid.");
        const raw = await readBody(req);
        if (raw === null) return apiError(res, 413, "validation_error", "The message is too large.");
        let payload: Record<string, unknown>;
        try {
          payload = JSON.parse(raw) as Record<string, unknown>;
        } catch {
          return apiError(res, 400, "validation_error", "The body is not valid JSON.");
        }
        const to = list(payload.to);
        const problems: string[] = [];
        if (typeof payload.from !== "string" || !payload.from) problems.push("`from` is required");
        if (to.length === 0) problems.push("`to` is required");
        if (typeof payload.subject !== "string" || !payload.subject) problems.push("`subject` is required");
        if (typeof payload.text !== "string" && typeof payload.html !== "string") problems.push("`text` or `html` is required");
        if (problems.length) return apiError(res, 422, "validation_error", problems.join("; "));

        const id = crypto.randomUUID();
        const now = new Date();
        const message: OutboxMessage = {
          object: "email",
          id,
          created_at: now.toISOString(),
          from: payload.from as string,
          to,
          cc: list(payload.cc),
          bcc: list(payload.bcc),
          reply_to: list(payload.reply_to),
          subject: payload.subject as string,
          text: typeof payload.text === "string" ? payload.text : null,
          html: typeof payload.html === "string" ? payload.html : null,
          tags: Array.isArray(payload.tags) ? (payload.tags as OutboxMessage["tags"]) : [],
          headers: (payload.headers as Record<string, string> | undefined) ?? {},
        };
        // Zero-padded time and a counter make the file names sort in sending order.
        const name = `${String(now.getTime()).padStart(15, "0")}-${String(sequence++).padStart(6, "0")}-${id}.json`;
        const file = path.join(outboxDir, name);
        fs.writeFileSync(`${file}.tmp`, JSON.stringify(message, null, 2));
        fs.renameSync(`${file}.tmp`, file);
        return send(res, 200, { id });
      }

      if (req.method === "GET" && url.pathname === "/emails") {
        return send(res, 200, { object: "list", has_more: false, data: readOutbox(outboxDir) });
      }

      const one = url.pathname.match(/^\/emails\/([0-9a-f-]{36})$/);
      if (req.method === "GET" && one) {
        const found = readOutbox(outboxDir).find((m) => m.id === one[1]);
        return found ? send(res, 200, found) : apiError(res, 404, "not_found", "Email not found.");
      }

      return apiError(res, 404, "not_found", "The requested endpoint does not exist.");
    } catch (error) {
      return apiError(res, 500, "application_error", error instanceof Error ? error.message : "Unexpected error.");
    }
  });

  await new Promise<void>((resolve, reject) => {
    server.once("error", reject);
    server.listen(options.port ?? 0, host, () => resolve());
  });
  const address = server.address();
  const port = typeof address === "object" && address ? address.port : options.port;
  return {
    url: `http://${host}:${port}`,
    close: () =>
      new Promise<void>((resolve, reject) => {
        server.closeAllConnections();
        server.close((err) => (err ? reject(err) : resolve()));
      }),
  };
}

const isMain = process.argv[1] && import.meta.url === pathToFileURL(path.resolve(process.argv[1])).href;
if (isMain) {
  const port = Number(process.env.MAIL_FAKE_PORT ?? 3025);
  const outboxDir = process.env.MAIL_OUTBOX_DIR ?? "data/outbox";
  const fake = await startMailFake({ port, outboxDir });
  console.log(`Mail fake listening on ${fake.url}; messages are kept in ${path.resolve(outboxDir)}`);
  console.log(`Point the app at it with RESEND_BASE_URL=${fake.url} (and a key starting with re_fake).`);
  const stop = () => void fake.close().then(() => process.exit(0));
  process.on("SIGINT", stop);
  process.on("SIGTERM", stop);
}

import { spawn, spawnSync, type ChildProcess } from "node:child_process";
import crypto from "node:crypto";
import fs from "node:fs";
import net from "node:net";
import path from "node:path";
import type { TestProject } from "vitest/node";
import { startMailFake } from "../../seed/mail-fake.ts";

declare module "vitest" {
  export interface ProvidedContext {
    baseUrl: string;
    outboxDir: string;
    mailFakeUrl: string;
    databaseFile: string;
    /** The app's SESSION_SECRET, so the sign-in fixture (helpers.ts signInAs) can sign its cookie. */
    sessionSecret: string;
  }
}

function freePort(): Promise<number> {
  return new Promise((resolve, reject) => {
    const srv = net.createServer();
    srv.once("error", reject);
    srv.listen(0, "127.0.0.1", () => {
      const { port } = srv.address() as net.AddressInfo;
      srv.close(() => resolve(port));
    });
  });
}

async function waitForServer(url: string, child: ChildProcess, log: () => string) {
  const deadline = Date.now() + 60_000;
  while (Date.now() < deadline) {
    if (child.exitCode !== null) throw new Error(`The app exited early:\n${log()}`);
    try {
      const res = await fetch(url);
      if (res.ok) return;
    } catch {
      // not listening yet
    }
    await new Promise((r) => setTimeout(r, 200));
  }
  throw new Error(`The app did not answer at ${url} within 60 s:\n${log()}`);
}

/**
 * Starts the built app on a free port with a database of its own (set up and seeded small)
 * and the local mail fake, and hands their addresses to the browser tests.
 */
export default async function setup(project: TestProject) {
  const root = process.cwd();
  if (!fs.existsSync(path.join(root, "build/server/index.js"))) {
    throw new Error("No build found: run `npm run build` before the browser tests (npm test does).");
  }
  const dir = path.resolve("tmp/e2e");
  fs.rmSync(dir, { recursive: true, force: true });
  fs.mkdirSync(dir, { recursive: true });
  const databaseFile = path.join(dir, "e2e.db");
  const outboxDir = path.join(dir, "outbox");

  const mail = await startMailFake({ port: 0, outboxDir });
  const port = await freePort();
  const sessionSecret = crypto.randomBytes(32).toString("hex");
  const baseUrl = `http://127.0.0.1:${port}`;
  const env = {
    ...process.env,
    NODE_ENV: "production",
    PORT: String(port),
    HOST: "127.0.0.1",
    APP_URL: baseUrl,
    DATABASE_URL: databaseFile,
    SESSION_SECRET: sessionSecret,
    RESEND_API_KEY: "re_fake_e2e",
    DEV_OUTBOX: "true",
    RESEND_BASE_URL: mail.url,
    MAIL_OUTBOX_DIR: outboxDir,
    SECURE_COOKIES: "false",
    REGION_OF_INTEREST: "55,62,-75,-58",
    // Every browser test signs in from 127.0.0.1, often as the same demo person.
    SIGN_IN_RATE_LIMIT_FACTOR: "50",
  };
  for (const args of [["scripts/setup.ts"], ["seed/run.ts", "--size", "small"]]) {
    const r = spawnSync(path.join(root, "node_modules/.bin/tsx"), args, { env, encoding: "utf8" });
    if (r.status !== 0) throw new Error(`${args.join(" ")} failed:\n${r.stdout}\n${r.stderr}`);
  }

  let output = "";
  const child = spawn(process.execPath, ["server.js"], { env, stdio: ["ignore", "pipe", "pipe"] });
  child.stdout!.on("data", (d) => (output += d));
  child.stderr!.on("data", (d) => (output += d));
  await waitForServer(baseUrl, child, () => output);

  project.provide("baseUrl", baseUrl);
  project.provide("outboxDir", outboxDir);
  project.provide("mailFakeUrl", mail.url);
  project.provide("databaseFile", databaseFile);
  project.provide("sessionSecret", sessionSecret);

  return async () => {
    child.kill("SIGTERM");
    await mail.close();
    if (process.env.E2E_SHOW_SERVER_LOG) console.log(output);
  };
}

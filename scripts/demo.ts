// `npm run demo`: everything a newcomer needs for a first look — set up the database, load the
// full demo scenario if it is empty, build, start the mail fake and the app, print where to go.
import { spawn, spawnSync } from "node:child_process";
import { randomBytes } from "node:crypto";
import fs from "node:fs";
import path from "node:path";
import Database from "better-sqlite3";

const port = process.env.PORT ?? "3000";
const mailPort = process.env.MAIL_FAKE_PORT ?? "3025";
const appUrl = process.env.APP_URL ?? `http://localhost:${port}`;
const databaseUrl = process.env.DATABASE_URL ?? "data/thawline.db";

/**
 * The demo's session and sign-in code secrets: random on the first run and kept beside the
 * database (readable by this user only), so sessions survive a restart and the demo is safe to
 * show on a lab network. Secrets set in the environment win.
 */
function demoSecrets(): { SESSION_SECRET: string; TOTP_SECRET: string; said: string } {
  const file = path.join(path.dirname(databaseUrl), "demo-secrets.json");
  let stored: { SESSION_SECRET?: string; TOTP_SECRET?: string };
  let said = `the random ones kept in ${file}`;
  try {
    stored = JSON.parse(fs.readFileSync(file, "utf8"));
  } catch {
    stored = { SESSION_SECRET: randomBytes(32).toString("hex"), TOTP_SECRET: randomBytes(32).toString("hex") };
    fs.mkdirSync(path.dirname(file), { recursive: true });
    fs.writeFileSync(file, JSON.stringify(stored, null, 2) + "\n", { mode: 0o600 });
    said = `generated at random and kept in ${file} (delete it to sign everyone out)`;
  }
  const SESSION_SECRET = process.env.SESSION_SECRET ?? stored.SESSION_SECRET!;
  const TOTP_SECRET = process.env.TOTP_SECRET ?? stored.TOTP_SECRET!;
  if (process.env.SESSION_SECRET && process.env.TOTP_SECRET) said = "taken from the environment";
  return { SESSION_SECRET, TOTP_SECRET, said };
}
const secrets = demoSecrets();

const env = {
  ...process.env,
  SESSION_SECRET: secrets.SESSION_SECRET,
  TOTP_SECRET: secrets.TOTP_SECRET,
  PORT: port,
  APP_URL: appUrl,
  DATABASE_URL: databaseUrl,
  RESEND_API_KEY: process.env.RESEND_API_KEY ?? "re_fake_demo",
  DEV_OUTBOX: process.env.DEV_OUTBOX ?? "true",
  RESEND_BASE_URL: process.env.RESEND_BASE_URL ?? `http://127.0.0.1:${mailPort}`,
  MAIL_FAKE_PORT: mailPort,
  MAIL_OUTBOX_DIR: process.env.MAIL_OUTBOX_DIR ?? "data/outbox",
  SECURE_COOKIES: process.env.SECURE_COOKIES ?? "false",
  // The demo's sites lie in northern Labrador and Ungava Bay.
  REGION_OF_INTEREST: process.env.REGION_OF_INTEREST ?? "55,62,-75,-58",
};
const tsx = path.resolve("node_modules/.bin/tsx");

function run(label: string, cmd: string, args: string[]) {
  console.log(`\n▸ ${label}`);
  const r = spawnSync(cmd, args, { stdio: "inherit", env });
  if (r.status !== 0) {
    console.error(`${label} failed.`);
    process.exit(r.status ?? 1);
  }
}

run("Setting up the database and curves", tsx, ["scripts/setup.ts"]);
const db = new Database(env.DATABASE_URL, { readonly: true });
const { n } = db.prepare("select count(*) as n from determinations").get() as { n: number };
db.close();
if (n === 0) run("Loading the full demo scenario", tsx, ["seed/run.ts", "--size", "full"]);
else console.log(`\n▸ The database already holds ${n} determinations; not seeding again.`);
run("Building the app", path.resolve("node_modules/.bin/vite"), ["build"]);

const children = [
  spawn(tsx, ["seed/mail-fake.ts"], { stdio: "inherit", env }),
  spawn(process.execPath, ["server.js"], { stdio: "inherit", env: { ...env, NODE_ENV: "production" } }),
];
for (const signal of ["SIGINT", "SIGTERM"] as const) {
  process.on(signal, () => {
    for (const c of children) c.kill(signal);
    process.exit(0);
  });
}

console.log(`
Thawline demo: ${appUrl}
Secrets for sessions and sign-in codes: ${secrets.said}.

Sign in with any of these invented demo addresses; the code and link arrive in the
local outbox at ${appUrl}/dev/outbox (no real mail is sent):
  contributor@example.org   reviewer@example.org   modeller@example.org
  editor@example.org        all-roles@example.org  (every role)
`);

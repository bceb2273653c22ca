// `npm run dev`: the Vite dev server plus the local mail fake it sends sign-in codes to.
import { spawn } from "node:child_process";
import path from "node:path";

const mailPort = process.env.MAIL_FAKE_PORT ?? "3025";
const env = {
  ...process.env,
  RESEND_API_KEY: process.env.RESEND_API_KEY ?? "re_fake_dev",
  RESEND_BASE_URL: process.env.RESEND_BASE_URL ?? `http://127.0.0.1:${mailPort}`,
  MAIL_FAKE_PORT: mailPort,
  SECURE_COOKIES: process.env.SECURE_COOKIES ?? "false",
};
const children = [
  spawn(path.resolve("node_modules/.bin/tsx"), ["seed/mail-fake.ts"], { stdio: "inherit", env }),
  spawn(path.resolve("node_modules/.bin/react-router"), ["dev", ...process.argv.slice(2)], { stdio: "inherit", env }),
];
for (const signal of ["SIGINT", "SIGTERM"] as const) {
  process.on(signal, () => {
    for (const c of children) c.kill(signal);
    process.exit(0);
  });
}
for (const c of children)
  c.on("exit", (code) => {
    for (const other of children) if (other !== c) other.kill();
    process.exit(code ?? 0);
  });

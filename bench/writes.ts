// The server thread's own writes while a 5,000-row commit holds the write lock in the writer thread
// (issue 14, "no request freezes the server"): a whole sign-in (code request, then the code typed), a
// rate-limited GET and a sign-out, each timed idle and during the commit, with this thread's CPU time
// and the longest pause of its event loop; and how long the commit held the write lock.
import fs from "node:fs";
import path from "node:path";
import Database from "better-sqlite3";
import { readOutbox, startMailFake } from "#seed/mail-fake.ts";
import { createToken } from "#app/models/accounts/tokens.server.ts";
import { readMessageText } from "#app/mail/templates.server.ts";
import { closeWorkers } from "#app/workers/pool.server.ts";
import { radiocarbonSheetRows, SHEET_HEADERS, type BenchSection } from "./support.ts";

type Timed = { ms: number; cpuMs: number; status: number | string };
const rows: { step: string; background: string; wallMs: number; cpuMs: number; pauseMs: number; status: number | string }[] = [];
let lockNote = "";

/**
 * CPU time of this process's main thread (user + system, ms, 10 ms ticks): process.cpuUsage() would
 * count the writer thread's work too.
 */
function mainThreadCpuMs(): number {
  const fields = fs.readFileSync(`/proc/self/task/${process.pid}/stat`, "utf8").split(") ")[1]!.split(" ");
  return ((Number(fields[11]) + Number(fields[12])) * 1000) / 100;
}

/** Wall and CPU time (this process) of one async step, with the longest pause of the event loop meanwhile. */
async function timed(step: () => Promise<number>): Promise<Timed & { pauseMs: number }> {
  let last = performance.now();
  let pauseMs = 0;
  const tick = setInterval(() => {
    const now = performance.now();
    pauseMs = Math.max(pauseMs, now - last);
    last = now;
  }, 5);
  const c0 = mainThreadCpuMs();
  const t0 = performance.now();
  // A step that throws (a write that waited out the busy timeout) is recorded as its error.
  const status = await step().catch((e: unknown) => `error: ${e instanceof Error ? e.message : String(e)}`);
  const ms = performance.now() - t0;
  const cpuMs = mainThreadCpuMs() - c0;
  clearInterval(tick);
  pauseMs = Math.max(pauseMs, performance.now() - last);
  return { ms, cpuMs, status, pauseMs };
}

function cookieJar() {
  const jar = new Map<string, string>();
  return {
    take(headers: Headers) {
      for (const line of headers.getSetCookie()) {
        const [pair, ...attrs] = line.split(";");
        const i = pair!.indexOf("=");
        const name = pair!.slice(0, i).trim();
        const value = pair!.slice(i + 1).trim();
        if (value === "" || attrs.some((a) => /^\s*max-age=0\s*$/i.test(a))) jar.delete(name);
        else jar.set(name, value);
      }
    },
    header: () => [...jar].map(([k, v]) => `${k}=${v}`).join("; "),
  };
}

async function call(fn: () => Promise<unknown>): Promise<Response> {
  try {
    const value = await fn();
    if (value instanceof Response) return value;
    const d = value as { init?: { status?: number } } | null;
    return new Response(null, { status: d?.init?.status ?? 200 });
  } catch (thrown) {
    if (thrown instanceof Response) return thrown;
    throw thrown;
  }
}

export const bench: BenchSection = {
  name: "writes",
  about: "the server thread's writes (sign-in, sign-out, a rate-limited GET) idle and during a 5,000-row commit",
  async run(ctx) {
    const outboxDir = path.join(ctx.dir, "outbox-writes");
    fs.rmSync(outboxDir, { recursive: true, force: true });
    const mail = await startMailFake({ port: 0, outboxDir });
    process.env.RESEND_BASE_URL = mail.url;
    const signIn = await import("#app/routes/account/sign-in.tsx");
    const signOut = await import("#app/routes/account/sign-out.ts");
    const curveWindow = await import("#app/routes/resources/curve-window.ts");
    const uploadsApi = await import("#app/routes/api/v1/uploads.ts");
    const commitApi = await import("#app/routes/api/v1/uploads.commit.ts");
    const email = "modeller@example.org";
    const args = (request: Request, params: Record<string, string> = {}) => ({ request, params, context: {} }) as never;
    const form = (fields: Record<string, string>) => {
      const body = new FormData();
      for (const [k, v] of Object.entries(fields)) body.append(k, v);
      return body;
    };
    let n = 0;

    /** Code request, then the code from the mail typed in: the whole sign-in as the form makes it. */
    const signInOnce = async (): Promise<number> => {
      const jar = cookieJar();
      const client = `203.0.113.${(n++ % 200) + 1}`;
      const asked = await call(() =>
        signIn.action(
          args(
            new Request("http://bench.local/sign-in", {
              method: "POST",
              body: form({ intent: "request", email, website: "" }),
              headers: { "X-Thawline-Client": client },
            }),
          ),
        ),
      );
      jar.take(asked.headers);
      const message = readOutbox(outboxDir).filter((m) => m.to.includes(email))[0];
      if (!message) return asked.status;
      const { code } = readMessageText(message.text ?? "");
      fs.rmSync(outboxDir, { recursive: true, force: true });
      fs.mkdirSync(outboxDir, { recursive: true });
      const verified = await call(() =>
        signIn.action(
          args(
            new Request("http://bench.local/sign-in", {
              method: "POST",
              body: form({ intent: "verify", code: code! }),
              headers: { Cookie: jar.header(), "X-Thawline-Client": client },
            }),
          ),
        ),
      );
      jar.take(verified.headers);
      lastSession = jar.header();
      return verified.status;
    };
    let lastSession = "";
    const signOutOnce = async () =>
      (
        await call(() =>
          signOut.action(args(new Request("http://bench.local/sign-out", { method: "POST", headers: { Cookie: lastSession } }))),
        )
      ).status;
    const rateLimitedGet = async () =>
      (
        await call(() =>
          curveWindow.loader(
            args(
              new Request("http://bench.local/api/curve-window?curve=intcal20&from=9000&to=8000", {
                headers: { "X-Thawline-Client": "203.0.113.250" },
              }),
            ),
          ),
        )
      ).status;
    // The shortest first, so each starts while the commit still holds the lock.
    const steps: [string, () => Promise<number>][] = [
      ["rate-limited GET /api/curve-window", rateLimitedGet],
      ["sign-in (code request + code)", signInOnce],
      ["sign-out", signOutOnce],
    ];

    // Warm: the modules and the first sign-in's one-time costs are not measured.
    await signInOnce();
    await signOutOnce();
    await rateLimitedGet();
    for (const [step, fn] of steps) {
      const t = await timed(fn);
      rows.push({ step, background: "idle", wallMs: t.ms, cpuMs: t.cpuMs, pauseMs: t.pauseMs, status: t.status });
    }

    // A 5,000-row upload, committed in the writer thread while the steps run on this one.
    const contributor = ctx.userId("contributor@example.org");
    const token = createToken(ctx.db, contributor, "writes bench", { actorId: contributor }).token;
    const lab = ctx.db.$client.prepare("select name, code_prefix as prefix from labs limit 1").get() as {
      name: string;
      prefix: string;
    };
    const sheet = radiocarbonSheetRows({
      count: 5000,
      tag: "wr",
      place: "Writes Cove",
      sites: 300,
      samplePrefix: "WR",
      labCodePrefix: `${lab.prefix}-W`,
      labName: lab.name,
    });
    const body = new FormData();
    body.append("file", new Blob([[SHEET_HEADERS.join(","), ...sheet.map((r) => r.join(","))].join("\n")]), "writes.csv");
    const auth = { Authorization: `Bearer ${token}` };
    const up = await call(() =>
      uploadsApi.action(args(new Request("http://bench.local/api/v1/uploads", { method: "POST", body, headers: auth }))),
    );
    const uploadId = ((await up.json()) as { upload_id: string }).upload_id;

    // Another connection probes the write lock every 2 ms: when the commit took it and let it go.
    const probe = new Database(ctx.dbFile);
    probe.pragma("busy_timeout = 0");
    let heldFrom: number | null = null;
    let heldTo: number | null = null;
    const start = performance.now();
    const watch = setInterval(() => {
      try {
        probe.exec("begin immediate");
        probe.exec("rollback");
        if (heldFrom !== null && heldTo === null) heldTo = performance.now();
      } catch {
        if (heldFrom === null) heldFrom = performance.now();
      }
    }, 2);
    const commit = call(() =>
      commitApi.action(
        args(
          new Request(`http://bench.local/api/v1/uploads/${uploadId}/commit`, {
            method: "POST",
            body: JSON.stringify({ mode: "all" }),
            headers: { ...auth, "Content-Type": "application/json" },
          }),
          { uploadId },
        ),
      ),
    );
    while (heldFrom === null && performance.now() - start < 60_000) await new Promise((r) => setTimeout(r, 2));
    for (const [step, fn] of steps) {
      const t = await timed(fn);
      rows.push({
        step,
        background: heldTo === null ? "during the commit's lock" : "lock released meanwhile",
        wallMs: t.ms,
        cpuMs: t.cpuMs,
        pauseMs: t.pauseMs,
        status: t.status,
      });
    }
    const committed = await commit;
    clearInterval(watch);
    probe.close();
    const commitMs = performance.now() - start;
    lockNote = `5,000-row commit: ${(commitMs / 1000).toFixed(2)} s in all (status ${committed.status}); write lock held ${
      heldFrom !== null && heldTo !== null ? `${((heldTo - heldFrom) / 1000).toFixed(2)} s` : "?"
    } (probed every 2 ms from another connection).`;
    ctx.report(
      "writes",
      "5,000-row commit: write lock held",
      heldFrom !== null && heldTo !== null ? `${((heldTo - heldFrom) / 1000).toFixed(2)} s` : "?",
    );
    for (const r of rows.filter((r) => r.background !== "idle")) {
      ctx.report("writes", `${r.step}, during a commit`, `${r.wallMs.toFixed(0)} ms (CPU ${r.cpuMs.toFixed(0)} ms)`);
    }
    await closeWorkers();
    await mail.close();
  },
  after() {
    const lines = [
      "The server thread's writes, idle and during a 5,000-row commit (wall, this thread's CPU, longest event-loop pause):",
      "",
      "| step | background | wall | CPU | longest pause | status |",
      "|---|---|---:|---:|---:|---:|",
      ...rows.map(
        (r) =>
          `| ${r.step} | ${r.background} | ${r.wallMs.toFixed(0)} ms | ${r.cpuMs.toFixed(0)} ms | ${r.pauseMs.toFixed(0)} ms | ${r.status} |`,
      ),
      "",
      lockNote,
    ];
    return lines.join("\n");
  },
};

// The load section of `npm run bench`: the production server under bounded traffic on 127.0.0.1
// (autocannon, 50 connections for 20 s per target: Explore, the map data, the determinations API,
// a constraint selection's CSV and, when there is a release, its CSV), then the same while 5,000-row
// uploads are committed back to back in the background. Each row reports wall time beside the CPU
// time of the server and of this process. BENCH_LOAD_ONLY=csv,explore measures only targets whose
// names contain one of those words. Standalone: `tsx bench/load.ts [--db file] [--port n]
// [--seconds n]` against an existing database (set up and seeded); `bench/run.ts` calls it on its own.
import { spawn, spawnSync, type ChildProcess } from "node:child_process";
import fs from "node:fs";
import net from "node:net";
import os from "node:os";
import path from "node:path";
import autocannon from "autocannon";
import { radiocarbonSheetRows, SHEET_HEADERS, type BenchSection } from "./support.ts";

export type LoadRow = {
  target: string;
  background: string;
  reqPerSec: number;
  p50: number;
  p95: number;
  p99: number;
  errors: number;
  non2xx: number;
  kbPerAnswer: number;
  /** Server process CPU time (user + system) per answer: less sensitive to other load on the machine. */
  cpuMsPerAnswer: number;
  /** Wall time of the measurement, s. */
  wallS: number;
  /** CPU time of the server process (its worker threads included) during it, s. */
  serverCpuS: number;
  /** CPU time of this process (the load generator) during it, s: it shares the machine's cores with the server. */
  benchCpuS: number;
  /** The machine's 1-minute load average at the end (other work on the shared machine). */
  loadAvg: number;
};

/** `next`, when given, names the path of each request in turn (a target of many addresses). */
type Target = { name: string; path: string; headers: Record<string, string>; next?: () => string };

/**
 * Every Explore page of the demo under every sort and direction, shuffled: 1,332 addresses for
 * 5,501 determinations, more than the kept pages and cached reads hold, so each answer is made whole.
 */
function exploreAddresses(): () => string {
  const sorts = ["labCode", "site", "age", "cal", "grade", "created"];
  const paths: string[] = [];
  for (const sort of sorts)
    for (const dir of ["asc", "desc"])
      for (let page = 1; page <= 111; page++) paths.push(`/explore?sort=${sort}&dir=${dir}&page=${page}`);
  let seed = 20261205;
  for (let i = paths.length - 1; i > 0; i--) {
    seed = (seed * 1103515245 + 12345) % 2 ** 31; // a fixed shuffle: the same order every run
    const j = seed % (i + 1);
    [paths[i], paths[j]] = [paths[j]!, paths[i]!];
  }
  let i = 0;
  return () => paths[i++ % paths.length]!;
}
/** appDir: another checkout's built app to measure instead of this one (a before/after comparison). */
type Options = { dbFile: string; port?: number; seconds?: number; connections?: number; appDir?: string };

async function freePort(): Promise<number> {
  return new Promise((resolve) => {
    const srv = net.createServer();
    srv.listen(0, "127.0.0.1", () => {
      const { port } = srv.address() as net.AddressInfo;
      srv.close(() => resolve(port));
    });
  });
}

function startServer(port: number, dbFile: string, log: string[], appDir?: string): ChildProcess {
  const child = spawn(process.execPath, ["server.js"], {
    cwd: appDir,
    env: {
      ...process.env,
      NODE_ENV: "production",
      PORT: String(port),
      HOST: "127.0.0.1",
      DATABASE_URL: dbFile,
      SECURE_COOKIES: "false",
      RESEND_API_KEY: "re_fake_bench",
      APP_URL: `http://127.0.0.1:${port}`,
    },
    stdio: ["ignore", "pipe", "pipe"],
  });
  const keep = (d: Buffer) => {
    log.push(d.toString());
    if (log.length > 200) log.splice(0, log.length - 200);
  };
  child.stdout!.on("data", keep);
  child.stderr!.on("data", keep);
  return child;
}

async function waitUp(base: string) {
  for (let i = 0; i < 600; i++) {
    try {
      if ((await fetch(base)).ok) return;
    } catch {
      // not listening yet
    }
    await new Promise((r) => setTimeout(r, 100));
  }
  throw new Error(`The server at ${base} did not come up`);
}

/**
 * Waits until the server has finished its start-up work (it fills the download cache with the
 * calendar densities in slices between requests, and says so in its log), so the measurement is of
 * a server in its steady state. At most 60 s.
 */
async function warmedUp(log: string[]) {
  for (let i = 0; i < 600 && !log.join("").includes("Download cache:"); i++) await new Promise((r) => setTimeout(r, 100));
}

/** A 5,000-row CSV of plausible radiocarbon rows, unique per call so commits never collide. */
function commitSheet(tag: string, labPrefix: string, labName: string): string {
  const rows = radiocarbonSheetRows({
    count: 5000,
    tag,
    place: "Load Cove",
    sites: 300,
    samplePrefix: "LD",
    labCodePrefix: `${labPrefix}-L`,
    labName,
  });
  return [SHEET_HEADERS.join(","), ...rows.map((r) => r.join(","))].join("\n");
}

/** Uploads and commits 5,000-row sheets one after another until told to stop. */
function backgroundCommits(base: string, token: string, lab: { prefix: string; name: string }) {
  let stop = false;
  const done: { ms: number; ok: boolean; status: number }[] = [];
  let n = 0;
  const loop = (async () => {
    while (!stop) {
      const tag = `${Date.now().toString(36)}${n++}`;
      const form = new FormData();
      form.set("file", new Blob([commitSheet(tag, lab.prefix, lab.name)], { type: "text/csv" }), `load-${tag}.csv`);
      const auth = { Authorization: `Bearer ${token}` };
      const up = await fetch(`${base}/api/v1/uploads`, { method: "POST", headers: auth, body: form });
      const upBody = (await up.json()) as { upload_id?: string };
      if (!up.ok || !upBody.upload_id) {
        done.push({ ms: 0, ok: false, status: up.status });
        break;
      }
      const start = performance.now();
      const res = await fetch(`${base}/api/v1/uploads/${upBody.upload_id}/commit`, {
        method: "POST",
        headers: { ...auth, "Content-Type": "application/json" },
        body: JSON.stringify({ mode: "valid_only" }),
      });
      const body = (await res.json()) as { job?: string };
      // A commit answered 202 runs as a job; wait for it to finish so the next one starts after it.
      if (res.status === 202 && body.job) {
        for (;;) {
          const j = await fetch(`${base}${body.job}`, { headers: auth });
          const state = (await j.json()) as { state?: string };
          if (state.state === "done" || state.state === "failed") break;
          await new Promise((r) => setTimeout(r, 200));
        }
      }
      done.push({ ms: performance.now() - start, ok: res.ok, status: res.status });
    }
  })();
  return {
    async stop() {
      stop = true;
      await loop;
      return done;
    },
  };
}

const percentile = (sorted: number[], p: number) =>
  sorted.length ? sorted[Math.min(sorted.length - 1, Math.ceil((p / 100) * sorted.length) - 1)]! : NaN;

/** CPU time used so far by a process, in ms (Linux /proc). */
function cpuMs(pid: number | undefined): number {
  try {
    const fields = fs.readFileSync(`/proc/${pid}/stat`, "utf8").split(") ")[1]!.split(" ");
    return ((Number(fields[11]) + Number(fields[12])) * 1000) / 100;
  } catch {
    return NaN;
  }
}

async function hit(base: string, t: Target, seconds: number, connections: number, pid?: number) {
  const cpuBefore = cpuMs(pid);
  const benchCpu = process.cpuUsage();
  const wallStart = performance.now();
  const times: number[] = [];
  const instance = autocannon({
    url: `${base}${t.path}`,
    connections,
    duration: seconds,
    headers: { "Accept-Encoding": "gzip, br", ...t.headers },
    ...(t.next ? { requests: [{ setupRequest: (req: object) => ({ ...req, path: t.next!() }) }] } : {}),
  }) as unknown as Promise<autocannon.Result> & { on: (event: "response", fn: (...args: never[]) => void) => void };
  instance.on("response", (_client: unknown, _status: number, _bytes: number, ms: number) => times.push(ms));
  const result = await instance;
  const wallS = (performance.now() - wallStart) / 1000;
  const bench = process.cpuUsage(benchCpu);
  const serverCpu = cpuMs(pid) - cpuBefore;
  times.sort((a, b) => a - b);
  const round = (x: number) => Math.round(x);
  return {
    reqPerSec: result.requests.total / seconds,
    p50: round(percentile(times, 50)),
    p95: round(percentile(times, 95)),
    p99: round(percentile(times, 99)),
    errors: result.errors + result.timeouts,
    non2xx: result.non2xx,
    kbPerAnswer: result.requests.total ? result.throughput.total / result.requests.total / 1024 : 0,
    cpuMsPerAnswer: result.requests.total ? serverCpu / result.requests.total : NaN,
    wallS,
    serverCpuS: serverCpu / 1000,
    benchCpuS: (bench.user + bench.system) / 1e6,
    loadAvg: os.loadavg()[0]!,
  };
}

async function credentials(dbFile: string) {
  process.env.DATABASE_URL = dbFile;
  const { getDb } = await import("#app/db/client.server.ts");
  const { createSession } = await import("#app/auth/session.server.ts");
  const { createToken } = await import("#app/models/accounts/tokens.server.ts");
  const db = getDb();
  const idOf = (email: string) =>
    (db.$client.prepare("select id from users where email = ?").get(email) as { id: number } | undefined)?.id;
  const modeller = idOf("modeller@example.org");
  const contributor = idOf("contributor@example.org");
  if (!modeller || !contributor) throw new Error(`${dbFile} has no demo people: seed it first`);
  const session = await createSession(modeller, new Request("http://bench.local/"));
  const modellerToken = createToken(db, modeller, "load bench", { actorId: modeller }).token;
  const contributorToken = createToken(db, contributor, "load bench uploads", { actorId: contributor }).token;
  const lab = db.$client.prepare("select name, code_prefix as prefix from labs limit 1").get() as {
    name: string;
    prefix: string;
  };
  // The newest release, when the database has one: its CSV is the release download of the load table.
  const release = db.$client.prepare("select slug from releases order by id desc limit 1").get() as { slug: string } | undefined;
  db.$client.pragma("wal_checkpoint(TRUNCATE)");
  return { cookie: session.cookie.split(";")[0]!, modellerToken, contributorToken, lab, releaseSlug: release?.slug };
}

export async function runLoadBench(options: Options): Promise<LoadRow[]> {
  const seconds = options.seconds ?? 20;
  const connections = options.connections ?? 50;
  if (!fs.existsSync("build/server/index.js")) {
    spawnSync(path.resolve("node_modules/.bin/react-router"), ["build"], { stdio: "inherit" });
  }
  const creds = await credentials(options.dbFile);
  const port = options.port ?? (await freePort());
  const base = `http://127.0.0.1:${port}`;
  const targets: Target[] = [
    { name: "Explore page (signed in)", path: "/explore", headers: { Cookie: creds.cookie } },
    {
      name: "Explore, 1,332 addresses in turn (nothing kept)",
      path: "/explore",
      headers: { Cookie: creds.cookie },
      next: exploreAddresses(),
    },
    { name: "map data /api/map-sites", path: "/api/map-sites", headers: { Cookie: creds.cookie } },
    {
      name: "GET /api/v1/determinations",
      path: "/api/v1/determinations",
      headers: { Authorization: `Bearer ${creds.modellerToken}` },
    },
    {
      // A modeller's download of a constraint selection: the default selection (graded 2 or 3) as CSV.
      name: "constraint selection CSV /api/v1/constraints?format=csv",
      path: "/api/v1/constraints?format=csv",
      headers: { Authorization: `Bearer ${creds.modellerToken}` },
    },
    ...(creds.releaseSlug
      ? [
          {
            name: `release download CSV /api/v1/releases/{slug}?format=csv`,
            path: `/api/v1/releases/${creds.releaseSlug}?format=csv`,
            headers: {},
          },
        ]
      : []),
  ];
  const only = process.env.BENCH_LOAD_ONLY?.split(",").map((x) => x.trim().toLowerCase());
  const chosen = only ? targets.filter((t) => only.some((o) => t.name.toLowerCase().includes(o))) : targets;
  const rows: LoadRow[] = [];
  // Each measurement starts a server on a fresh copy of the database, so the commits of one
  // measurement do not grow the registry the next one reads.
  const work = path.join(path.dirname(options.dbFile), "load-work.db");
  for (const withCommits of [false, true]) {
    for (const t of chosen) {
      for (const suffix of ["", "-wal", "-shm"]) fs.rmSync(work + suffix, { force: true });
      fs.copyFileSync(options.dbFile, work);
      const log: string[] = [];
      const server = startServer(port, work, log, options.appDir);
      try {
        await waitUp(base);
        await warmedUp(log);
        await hit(base, t, 2, 4); // warm caches and compiled paths
        console.log(
          `  load: ${t.name}, ${connections} connections × ${seconds} s${withCommits ? " during 5,000-row commits" : ""}…`,
        );
        if (!withCommits) {
          rows.push({ target: t.name, background: "idle", ...(await hit(base, t, seconds, connections, server.pid)) });
          continue;
        }
        const bg = backgroundCommits(base, creds.contributorToken, creds.lab);
        const r = await hit(base, t, seconds, connections, server.pid);
        const commits = await bg.stop();
        const ok = commits.filter((c) => c.ok);
        const failed = commits.length - ok.length;
        const longest = ok.length ? `, longest ${(Math.max(...ok.map((c) => c.ms)) / 1000).toFixed(1)} s` : "";
        const label = `${ok.length} commit(s) of 5,000 rows${longest}${failed ? `, ${failed} failed (${commits.find((c) => !c.ok)?.status})` : ""}`;
        rows.push({ target: t.name, background: label, ...r });
      } finally {
        server.kill("SIGTERM");
        await new Promise((resolve) => server.once("exit", resolve));
        if (process.env.BENCH_SHOW_SERVER_LOG) console.log(log.join(""));
      }
    }
  }
  for (const suffix of ["", "-wal", "-shm"]) fs.rmSync(work + suffix, { force: true });
  return rows;
}

export function loadTable(rows: LoadRow[]): string {
  const head =
    "| target | background | req/s | p50 ms | p95 ms | p99 ms | errors | non-2xx | KB/answer | server CPU ms/answer | wall s | server CPU s | bench CPU s | load avg |";
  const line = "|---|---|---:|---:|---:|---:|---:|---:|---:|---:|---:|---:|---:|---:|";
  const body = rows.map(
    (r) =>
      `| ${r.target} | ${r.background} | ${r.reqPerSec.toFixed(0)} | ${r.p50} | ${r.p95} | ${r.p99} | ${r.errors} | ${r.non2xx} | ${r.kbPerAnswer.toFixed(1)} | ${r.cpuMsPerAnswer.toFixed(1)} | ${r.wallS.toFixed(1)} | ${r.serverCpuS.toFixed(1)} | ${r.benchCpuS.toFixed(1)} | ${r.loadAvg.toFixed(1)} |`,
  );
  return [
    head,
    line,
    ...body,
    "",
    `Wall time beside CPU time: server CPU s / wall s is the share of a core the server got; the machine has ${os.cpus().length} cores, and the load average says how many other processes wanted them.`,
  ].join("\n");
}

if (import.meta.url === `file://${process.argv[1]}`) {
  const arg = (name: string) => {
    const i = process.argv.indexOf(`--${name}`);
    return i > 0 ? process.argv[i + 1] : undefined;
  };
  const rows = await runLoadBench({
    dbFile: path.resolve(arg("db") ?? process.env.DATABASE_URL ?? "tmp/bench/bench.db"),
    port: arg("port") ? Number(arg("port")) : undefined,
    seconds: arg("seconds") ? Number(arg("seconds")) : undefined,
    appDir: arg("app") ? path.resolve(arg("app")!) : undefined,
  });
  console.log(`\nThawline load — ${new Date().toISOString()} — Node ${process.version}\n`);
  console.log(loadTable(rows));
  process.exit(0);
}

let lastRows: LoadRow[] = [];

export const bench: BenchSection = {
  name: "load",
  about:
    "50 connections × 20 s against Explore, the map data, the determinations API and the constraint and release CSV downloads, idle and during 5,000-row commits",
  async run({ db, dbFile }) {
    console.log("Load: 50 connections × 20 s per target, idle and during 5,000-row commits…");
    db.$client.pragma("wal_checkpoint(TRUNCATE)");
    lastRows = await runLoadBench({ dbFile });
  },
  after: () => (lastRows.length ? loadTable(lastRows) : undefined),
};

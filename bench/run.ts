// `npm run bench`: the figures the issues ask for, measured on the full-size demo scenario in
// databases of its own (tmp/bench). One module per section; each section starts from its own
// copy of the seeded database, so a section gives the same figures alone as in the whole run.
// Prints one table (the load section adds its own after it). Nothing here is a pass/fail test.
//
//   npm run bench                          every section (seeds afresh)
//   npm run bench -- --only checks,upload  these sections (reuses tmp/bench/seeded.db when present)
//   npm run bench -- --list                the sections
import fs from "node:fs";
import path from "node:path";
import { parseArgs } from "node:util";

const dir = path.resolve("tmp/bench");
const seededFile = path.join(dir, "seeded.db");
const workFile = path.join(dir, "bench.db");
fs.mkdirSync(dir, { recursive: true });
// Before any app module reads its environment: the app (and the servers the sections start) use
// the work copy; model-run files live beside it, in tmp/bench/model-runs.
process.env.DATABASE_URL = workFile;
process.env.NODE_ENV = "production";
process.env.SECURE_COOKIES = "false";
process.env.RESEND_API_KEY = "re_fake_bench";
process.env.MAIL_OUTBOX_DIR = path.join(dir, "outbox");

const { migrateDatabase, openDatabase, setDb } = await import("#app/db/client.server.ts");
const { seedBenchDatabase } = await import("./seed.ts");
type BenchSection = import("./support.ts").BenchSection;

// The order of the table. Each module exports `bench` (bench/support.ts BenchSection).
const SECTIONS: BenchSection[] = [
  (await import("./explore.ts")).bench,
  (await import("./calibration.ts")).bench,
  (await import("./checks.ts")).bench,
  (await import("./upload.ts")).bench,
  (await import("./releases.ts")).bench,
  (await import("./runs.ts")).bench,
  (await import("./load.ts")).bench,
  (await import("./site-search.ts")).bench,
  (await import("./writes.ts")).bench,
];
const NAMES = ["seed", ...SECTIONS.map((s) => s.name)];

const { values } = parseArgs({ options: { only: { type: "string" }, list: { type: "boolean" } } });
if (values.list) {
  console.log("seed: curve import and the full demo seed (the start of every other section)");
  for (const s of SECTIONS) console.log(`${s.name}: ${s.about}`);
  process.exit(0);
}
const only = values.only ? values.only.split(",").map((s) => s.trim()) : NAMES;
const unknown = only.filter((n) => !NAMES.includes(n));
if (unknown.length) {
  console.error(`Unknown section(s): ${unknown.join(", ")}. Sections: ${NAMES.join(", ")}`);
  process.exit(2);
}

type Row = { area: string; measure: string; value: string; goal?: string };
const table: Row[] = [];
const report: import("./support.ts").Report = (area, measure, value, goal) => {
  table.push({ area, measure, value, goal });
  console.log(`  ${area} · ${measure}: ${value}`);
};
const remove = (file: string) => {
  for (const suffix of ["", "-wal", "-shm"]) fs.rmSync(file + suffix, { force: true });
};

// ---------------------------------------------------------------- the seeded start
if (only.includes("seed") || !fs.existsSync(seededFile)) {
  console.log("Seeding the full demo scenario…");
  remove(seededFile);
  fs.rmSync(path.join(dir, "model-runs"), { recursive: true, force: true });
  const db = openDatabase(seededFile);
  migrateDatabase(db);
  await seedBenchDatabase(db, report);
  db.$client.pragma("wal_checkpoint(TRUNCATE)");
  db.$client.close();
} else {
  console.log(`Using the seeded database ${path.relative(process.cwd(), seededFile)} (run with --only seed,… to seed afresh)`);
}

// ---------------------------------------------------------------- sections, each on a fresh copy
const after: string[] = [];
for (const section of SECTIONS.filter((s) => only.includes(s.name))) {
  remove(workFile);
  fs.copyFileSync(seededFile, workFile);
  const db = openDatabase(workFile);
  setDb(db);
  const userId = (email: string) => {
    const id = db.$client.prepare("select id from users where email = ?").pluck().get(email) as number | undefined;
    if (!id) throw new Error(`The seeded database has no ${email}`);
    return id;
  };
  try {
    await section.run({ db, dbFile: workFile, dir, report, userId });
  } finally {
    if (db.$client.open) db.$client.close();
    setDb(undefined);
  }
  const extra = section.after?.();
  if (extra) after.push(extra);
}
remove(workFile);

// ---------------------------------------------------------------- table
const w1 = Math.max(4, ...table.map((r) => r.area.length));
const w2 = Math.max(7, ...table.map((r) => r.measure.length));
const w3 = Math.max(5, ...table.map((r) => r.value.length));
console.log(`\nThawline benchmarks — ${new Date().toISOString()} — Node ${process.version} — ${only.join(", ")}\n`);
console.log(`| ${"area".padEnd(w1)} | ${"measure".padEnd(w2)} | ${"value".padStart(w3)} | goal |`);
console.log(`|${"-".repeat(w1 + 2)}|${"-".repeat(w2 + 2)}|${"-".repeat(w3 + 2)}|------|`);
for (const r of table)
  console.log(`| ${r.area.padEnd(w1)} | ${r.measure.padEnd(w2)} | ${r.value.padStart(w3)} | ${r.goal ?? ""} |`);
for (const text of after) console.log(`\n${text}`);
process.exit(0);

// `npm test`: every test — unit, integration, then the browser tests against a fresh build.
// Ends with one plain summary line ("N passed, N failed") across all three projects.
import { spawnSync } from "node:child_process";
import fs from "node:fs";
import path from "node:path";

const bin = (name: string) => path.resolve("node_modules/.bin", name);
fs.mkdirSync("tmp", { recursive: true });

type Totals = { passed: number; failed: number; skipped: number };
const totals: Totals = { passed: 0, failed: 0, skipped: 0 };
let ok = true;

function step(label: string, cmd: string, args: string[]) {
  console.log(`\n=== ${label}`);
  const r = spawnSync(cmd, args, { stdio: "inherit", env: process.env });
  if (r.status !== 0) ok = false;
  return r.status === 0;
}

/** `shuffle`: run the files and tests in a random order (each integration test has a database of its own). */
function vitest(project: string, { shuffle = false } = {}) {
  const out = path.resolve(`tmp/vitest-${project}.json`);
  fs.rmSync(out, { force: true });
  step(`${project} tests`, bin("vitest"), [
    "run",
    "--project",
    project,
    ...(shuffle ? ["--sequence.shuffle"] : []),
    "--reporter=default",
    "--reporter=json",
    `--outputFile.json=${out}`,
  ]);
  if (fs.existsSync(out)) {
    const report = JSON.parse(fs.readFileSync(out, "utf8")) as {
      numPassedTests: number;
      numFailedTests: number;
      numPendingTests: number;
      numTodoTests: number;
    };
    totals.passed += report.numPassedTests;
    totals.failed += report.numFailedTests;
    totals.skipped += report.numPendingTests + report.numTodoTests;
  } else {
    ok = false;
  }
}

vitest("unit", { shuffle: true });
vitest("integration", { shuffle: true });
if (step("build", bin("vite"), ["build"])) vitest("e2e");

console.log(`\n${totals.passed} passed, ${totals.failed} failed, ${totals.skipped} skipped`);
if (totals.passed === 0) ok = false;
process.exit(ok && totals.failed === 0 ? 0 : 1);

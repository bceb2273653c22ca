import { spawnSync } from "node:child_process";
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import { beforeAll, describe, expect, it, inject } from "vitest";
import { constraintExamples } from "#app/components/api-docs/constraint-examples.ts";

/*
 * Every constraints/releases example shown at /api-docs, run as shown against the running app
 * (curl with bash, Python with the system python3 and its requests, pandas and numpy). Nothing is
 * skipped: without python3 and those packages this test fails.
 */

const PYTHON = "/usr/bin/python3";
let env: NodeJS.ProcessEnv;
let slug: string;

beforeAll(async () => {
  const baseUrl = inject("baseUrl");
  const token = spawnSync(
    path.resolve("node_modules/.bin/tsx"),
    ["scripts/token.ts", "--email", "modeller@example.org", "--label", "examples"],
    {
      env: { ...process.env, DATABASE_URL: inject("databaseFile") },
      encoding: "utf8",
    },
  );
  expect(token.status, token.stderr).toBe(0);
  const match = /\S{20,}/.exec(token.stdout.trim().split("\n").pop() ?? "");
  expect(match).not.toBeNull();
  env = { ...process.env, THAWLINE_URL: baseUrl, THAWLINE_TOKEN: match![0] };
  const list = (await (await fetch(`${baseUrl}/api/v1/releases`)).json()) as { releases: { slug: string }[] };
  expect(list.releases.length).toBeGreaterThan(0);
  slug = list.releases[0]!.slug;
});

describe("the /api-docs examples run against the app", () => {
  it("python3 with requests, pandas and numpy is installed (.ci/run installs them)", () => {
    const r = spawnSync(PYTHON, ["-c", "import requests, pandas, numpy"], { encoding: "utf8" });
    expect(r.status, r.stderr).toBe(0);
  });

  it("the page shows every example", async () => {
    const html = await (await fetch(`${inject("baseUrl")}/api-docs`)).text();
    for (const ex of constraintExamples(slug)) expect(html).toContain(`data-example="${ex.id}"`);
  });

  for (const id of [
    "curl-constraints-csv",
    "curl-constraints-polygon",
    "curl-releases",
    "python-pandas-numpy",
    "python-checksum",
  ]) {
    it(`runs ${id}`, () => {
      const ex = constraintExamples(slug).find((e) => e.id === id)!;
      const dir = fs.mkdtempSync(path.join(os.tmpdir(), "thawline-example-"));
      const r =
        ex.language === "bash"
          ? spawnSync("bash", ["-euo", "pipefail", "-c", ex.code], { env, cwd: dir, encoding: "utf8", timeout: 120_000 })
          : spawnSync(PYTHON, ["-c", ex.code], { env, cwd: dir, encoding: "utf8", timeout: 120_000 });
      expect(r.status, `${r.stdout}\n${r.stderr}`).toBe(0);
      expect(r.stdout.trim().length).toBeGreaterThan(0);
      if (id === "python-checksum") expect(r.stdout.startsWith("True")).toBe(true);
      fs.rmSync(dir, { recursive: true, force: true });
    });
  }
});

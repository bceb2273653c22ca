// Model-run uploads through the streaming file intake: a file past MODEL_RUN_MAX_BYTES (2 MB in
// the integration set-up) is refused with 413 and a message while it streams in, through the API
// and the /runs page alike, and nothing is left behind (no run, no kept file, no temporary folder).
import { existsSync, mkdtempSync, readdirSync, rmSync } from "node:fs";
import { join } from "node:path";
import { tmpdir } from "node:os";
import { eq } from "drizzle-orm";
import { afterEach, beforeEach, describe, expect, it } from "vitest";
import { getDb } from "#app/db/client.server.ts";
import { modelRuns } from "#app/db/schema.ts";
import { storedFile } from "#app/models/model-runs/runs.server.ts";
import { bodyLimitFor } from "#app/http/body-limit.js";
import { action as postRun } from "#app/routes/api/v1/model-runs.ts";
import { action as runsAction } from "#app/routes/runs/runs.tsx";
import { args, run } from "#tests/support/auth.ts";
import { apiUpload, pageUpload, runFile, runsKept, scoringIdle, seedRunFixture } from "#tests/support/model-runs.ts";
import { streamingRequest } from "#tests/support/streaming-request.ts";

const fx = seedRunFixture("ZZI", [3]);
const LIMIT = 2 * 1024 * 1024;

// The intake's temporary folders go to a folder of this test's own, so "nothing left" can be seen.
let temp: string;
let savedTmp: string | undefined;
beforeEach(() => {
  savedTmp = process.env.TMPDIR;
  temp = mkdtempSync(join(tmpdir(), "runs-intake-"));
  process.env.TMPDIR = temp;
});
afterEach(() => {
  if (savedTmp === undefined) delete process.env.TMPDIR;
  else process.env.TMPDIR = savedTmp;
  rmSync(temp, { recursive: true, force: true });
});

describe("model-run uploads past the size limit", () => {
  it("the API stops reading an endless run file just past the limit: 413 with the limit named, nothing kept", async () => {
    const before = runsKept();
    const { request, counter } = streamingRequest(
      [
        { name: "name", body: "endless" },
        { name: "file", filename: "endless.nc", endless: true },
      ],
      { Authorization: `Bearer ${fx.token}` },
      "/api/v1/model-runs",
    );
    // The body never ends: without the streaming limit this test would time out.
    const res = await run(() => postRun(args(request)));
    expect(res.status).toBe(413);
    expect((res.data as { error: string }).error).toMatch(
      /^endless\.nc: the file is over the size limit; the limit is 2\.0 MB\. Score larger runs where they live with npm run score\./,
    );
    expect(counter.pulled).toBeLessThan(LIMIT + 512 * 1024);
    expect(runsKept()).toEqual(before);
    expect(readdirSync(temp)).toEqual([]);
  });

  it("the /runs page refuses an ensemble with one file past the limit and keeps none of its files", async () => {
    const before = runsKept();
    const good = await runFile(fx.dir, "good.nc", 10500);
    const big = new File([new Uint8Array(LIMIT + 1024).fill(0x41)], "big.nc");
    const res = await run(() => runsAction(args(pageUpload(fx.modeller.cookie, [good, big], { ensemble: "too-big" }))));
    expect(res.status).toBe(413);
    expect((res.data as { error: string }).error).toContain("big.nc: the file is over the size limit; the limit is 2.0 MB");
    expect(runsKept()).toEqual(before);
    expect(readdirSync(temp)).toEqual([]);
  });
});

describe("model-run uploads by content", () => {
  it("refuses a file that is not a model run, naming what it looks like; nothing kept", async () => {
    const before = runsKept();
    const pdf = new File(["%PDF-1.4 not a run"], "run.nc");
    const res = await run(() => postRun(args(apiUpload(fx.token, { file: pdf, name: "pdf" }))));
    expect(res.status).toBe(400);
    expect((res.data as { error: string }).error).toBe(
      "run.nc: this file looks like a PDF; a model run is a NetCDF (3 or 4) or GeoJSON file.",
    );
    expect(runsKept()).toEqual(before);
    expect(readdirSync(temp)).toEqual([]);
  });

  it("takes a page upload whose parameters-CSV input was left empty, and removes its temporary files", async () => {
    const before = runsKept();
    const body = pageUpload(fx.modeller.cookie, [await runFile(fx.dir, "plain.nc", 10500)], {
      // What a browser sends for a file input left empty: a part with no file name and no bytes.
      parameters_csv: new File([], ""),
    });
    const res = await run(() => runsAction(args(body)));
    expect(res.status).toBe(302);
    const kept = getDb().select().from(modelRuns).where(eq(modelRuns.name, "plain")).get()!;
    expect(kept.parameters).toBeNull();
    expect(existsSync(storedFile(kept)!)).toBe(true);
    expect(runsKept().rows).toBe(before.rows + 1);
    expect(readdirSync(temp)).toEqual([]);
    await scoringIdle();
  });
});

describe("the production server's body limit for model runs", () => {
  it("lets a model-run file through to the intake (it was held to 1 MB on /runs before) and keeps other forms small", () => {
    const o = {
      uploadMaxBytes: 10 * 1024 * 1024,
      modelRunMaxBytes: 512 * 1024 * 1024,
      modelRunBatchMaxBytes: 2048 * 1024 * 1024,
    };
    expect(bodyLimitFor("/api/v1/model-runs", o)).toBeGreaterThan(o.modelRunMaxBytes);
    expect(bodyLimitFor("/runs", o)).toBeGreaterThan(o.modelRunBatchMaxBytes);
    // The time-mapping form of one run is an ordinary form.
    expect(bodyLimitFor("/runs/12", o)).toBe(1024 * 1024);
  });
});

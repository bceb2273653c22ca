import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import Papa from "papaparse";
import { describe, expect, inject, test } from "vitest";
import { writeNetcdf4 } from "#app/models/model-runs/netcdf-writer.server.ts";
import { useBrowserAndDatabase } from "./browser.ts";
import { signInAs } from "./helpers.ts";

/*
 * A modeller's journey: upload a three-run ensemble (small NetCDF-4 files written here, with a
 * parameters CSV), watch it being scored, read the ranking, download the CSV for an emulator.
 */

const baseUrl = inject("baseUrl");
const e2e = useBrowserAndDatabase();

/** A lat/lon grid over the demo region whose ice leaves everywhere at `degl` cal BP. */
async function writeRun(file: string, degl: number) {
  const lats = Array.from({ length: 15 }, (_, j) => 55 + j * 0.5);
  const lons = Array.from({ length: 35 }, (_, i) => -75 + i * 0.5);
  const ages = Array.from({ length: 25 }, (_, k) => 18000 - k * 500);
  await writeNetcdf4(file, {
    time: { name: "time", values: ages, attrs: { standard_name: "time", units: "years BP" } },
    y: { name: "lat", values: lats, attrs: { standard_name: "latitude", units: "degrees_north" } },
    x: { name: "lon", values: lons, attrs: { standard_name: "longitude", units: "degrees_east" } },
    ice: {
      name: "thk",
      attrs: { standard_name: "land_ice_thickness", units: "m" },
      slice: (k) => new Float32Array(lats.length * lons.length).fill(ages[k] > degl ? 900 : 0),
    },
  });
}

describe("scoring an ensemble", () => {
  test("upload three runs with parameters → progress → ranking → CSV", async () => {
    const dir = fs.mkdtempSync(path.join(os.tmpdir(), "thawline-e2e-runs-"));
    const ensemble = `e2e-ensemble-${Date.now() % 100000}`;
    const degl = { "e2e-a": 16000, "e2e-b": 11000, "e2e-c": 7000 };
    const files = await Promise.all(
      Object.entries(degl).map(async ([name, t]) => {
        const file = path.join(dir, `${name}.nc`);
        await writeRun(file, t);
        return file;
      }),
    );
    const csvFile = path.join(dir, "parameters.csv");
    fs.writeFileSync(csvFile, "run,melt\ne2e-a.nc,0.5\ne2e-b.nc,1\ne2e-c.nc,1.5\n");

    const context = await e2e.browser.newContext({ acceptDownloads: true });
    const page = await context.newPage();
    await signInAs(page, "modeller@example.org");
    await page.goto(`${baseUrl}/runs`);
    await page.getByRole("heading", { name: "Upload runs" }).waitFor();
    await page.setInputFiles('input[name="file"]', files);
    await page.setInputFiles('input[name="parameters_csv"]', csvFile);
    await page.fill('input[name="ensemble"]', ensemble);
    await Promise.all([page.waitForURL(`${baseUrl}/runs`), page.getByRole("button", { name: "Upload and score" }).click()]);

    // The scoring job's progress, counted in time slices (3 runs × 25), until it is done.
    const progress = page.getByRole("progressbar", { name: /Scoring runs/ });
    await progress.first().waitFor();
    await page.getByText(/Done: 3 runs scored/).waitFor({ timeout: 60_000 });
    const jobRow = e2e.db
      .prepare("select status, progress, total from jobs where kind = 'score-model-runs' order by id desc limit 1")
      .get() as { status: string; progress: number; total: number };
    expect(jobRow).toEqual({ status: "done", progress: 75, total: 75 });

    await page.getByRole("link", { name: ensemble }).first().click();
    await page.waitForURL(new RegExp(`/runs/ensembles/${ensemble}$`));
    const rows = page.locator('[data-testid="ensemble-ranking"] tbody tr');
    await expect.poll(() => rows.count()).toBe(3);
    const names = await rows.locator("td a").allTextContents();
    expect(new Set(names)).toEqual(new Set(Object.keys(degl)));

    const [download] = await Promise.all([
      page.waitForEvent("download"),
      page.getByRole("link", { name: "Runs CSV for emulator training" }).click(),
    ]);
    const text = fs.readFileSync((await download.path())!, "utf8");
    const csv = Papa.parse<Record<string, string>>(text, { header: true, skipEmptyLines: true });
    expect(csv.meta.fields).toEqual(
      expect.arrayContaining(["run", "melt", "log_likelihood", "max_implausibility", "n_constraints"]),
    );
    expect(csv.data.map((r) => r.run)).toEqual(names);
    const logL = csv.data.map((r) => Number(r.log_likelihood));
    expect(logL.every(Number.isFinite)).toBe(true);
    expect([...logL].sort((a, b) => b - a)).toEqual(logL);
    expect(Number(csv.data.find((r) => r.run === "e2e-b")!.melt)).toBe(1);
    await context.close();
    fs.rmSync(dir, { recursive: true, force: true });
  });
});

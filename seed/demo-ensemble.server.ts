// Stores the demo ensemble at seed time: ten real NetCDF-4 files (kept like uploads, so a
// modeller can download and re-upload them), each queued and scored against the default
// constraints, so the first look shows a ranked ensemble.

import { mkdtempSync, rmSync } from "node:fs";
import { tmpdir } from "node:os";
import { basename, join } from "node:path";
import { eq } from "drizzle-orm";
import type { Db } from "#app/db/client.server.ts";
import { modelRuns } from "#app/db/schema.ts";
import { createRun, deleteRun, scoreStoredRun } from "#app/models/model-runs/runs.server.ts";
import { DEMO_ENSEMBLE, DEMO_ENSEMBLE_NAME } from "./ensemble.ts";
import { writeDemoEnsemble } from "./ensemble-files.server.ts";
import type { RetreatParams } from "./retreat.ts";

export async function seedDemoEnsemble(db: Db, retreat: RetreatParams, modellerId: number): Promise<number[]> {
  for (const r of db.select({ id: modelRuns.id }).from(modelRuns).where(eq(modelRuns.ensemble, DEMO_ENSEMBLE_NAME)).all())
    deleteRun(db, r.id);
  const dir = mkdtempSync(join(tmpdir(), "thawline-ensemble-"));
  try {
    const paths = await writeDemoEnsemble(dir, retreat);
    const ids: number[] = [];
    for (const [i, path] of paths.entries()) {
      const m = DEMO_ENSEMBLE[i];
      const run = await createRun(db, {
        userId: modellerId,
        name: m.name,
        ensemble: DEMO_ENSEMBLE_NAME,
        filePath: path,
        fileName: basename(path),
        parameters: m.parameters,
        maxBytes: Infinity,
      });
      await scoreStoredRun(db, run.id);
      ids.push(run.id);
    }
    return ids;
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}

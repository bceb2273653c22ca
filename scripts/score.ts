// `npm run score -- <files…> [--release <slug>] [--out scores.csv] [--scores per-constraint.csv]
//   [--time-offset <cal BP>] [--threshold <m>] [--tolerance <cells|km>] [--epsilon <ε>]`
// Scores model-run files where they live (a workstation, a cluster job) with the same code as
// the web: constraints from the registry database (DATABASE_URL), a release by slug or, by
// default, every determination graded 2 or 3. Nothing is written to the database.
import { writeFileSync } from "node:fs";
import { basename } from "node:path";
import { parseArgs } from "node:util";
import { getDb } from "#app/db/client.server.ts";
import { loadConstraints } from "#app/models/model-runs/constraints.server.ts";
import { ModelRunFileError } from "#app/models/model-runs/errors.ts";
import { closeRunFile, openRunFile } from "#app/models/model-runs/run-file.server.ts";
import { scoreRun } from "#app/models/model-runs/score-run.server.ts";
import { toCsv } from "#app/utils/csv.ts";

const usage =
  "Usage: npm run score -- <files…> [--release <slug>] [--out scores.csv] [--scores per-constraint.csv] [--time-offset <cal BP>] [--threshold <m>] [--tolerance <n>] [--epsilon <ε>]";
const { values, positionals } = parseArgs({
  options: {
    release: { type: "string" },
    out: { type: "string" },
    scores: { type: "string" },
    "time-offset": { type: "string" },
    threshold: { type: "string" },
    tolerance: { type: "string" },
    epsilon: { type: "string" },
  },
  allowPositionals: true,
});
if (!positionals.length) {
  console.error(usage);
  process.exit(2);
}
const num = (v: string | undefined, name: string) => {
  if (v === undefined) return undefined;
  const n = Number(v);
  if (!Number.isFinite(n)) {
    console.error(`--${name} must be a number, not "${v}".`);
    process.exit(2);
  }
  return n;
};
const timeOffset = num(values["time-offset"], "time-offset");
const thresholdM = num(values.threshold, "threshold");
const tolerance = num(values.tolerance, "tolerance");
const epsilon = num(values.epsilon, "epsilon");

const set = loadConstraints(getDb(), { releaseSlug: values.release });
console.error(`${set.constraints.length} constraints (${set.label}).`);
const summary: (string | number | null)[][] = [];
const perConstraint: (string | number | null)[][] = [];
let failures = 0;
for (const path of positionals) {
  const t0 = performance.now();
  try {
    const run = await openRunFile(path, { timeOffset, thresholdM, maxBytes: Infinity });
    let r;
    try {
      r = await scoreRun(run, set.constraints, { tolerance, epsilon });
    } finally {
      closeRunFile(run);
    }
    const t = r.totals;
    summary.push([
      basename(path),
      t.logLikelihood,
      t.nConstraints,
      t.shareAgreeing,
      t.maxImplausibility,
      t.secondImplausibility,
      t.nImplausible,
      t.ruledOut ? 1 : 0,
      r.nOutsideSpan,
      r.nOffDomain,
    ]);
    for (const s of r.scores)
      perConstraint.push([basename(path), s.determinationId, s.score, s.implausibility, s.modelDeglaciationCalBp]);
    console.error(
      `${basename(path)}: log L ${t.logLikelihood.toFixed(2)}, ${t.nConstraints} constraints, max I ${t.maxImplausibility.toFixed(2)}${t.ruledOut ? " (ruled out)" : ""} — ${(performance.now() - t0).toFixed(0)} ms`,
    );
  } catch (e) {
    failures++;
    const message = e instanceof ModelRunFileError ? e.message : (e as Error).message;
    console.error(`${basename(path)}: ${message}`);
    summary.push([basename(path), null, null, null, null, null, null, null, null, null]);
  }
}
const csv = toCsv(
  [
    "run",
    "log_likelihood",
    "n_constraints",
    "share_score_ge_0_5",
    "max_implausibility",
    "second_implausibility",
    "n_implausible",
    "ruled_out",
    "n_outside_span",
    "n_off_domain",
  ],
  summary,
);
if (values.out) writeFileSync(values.out, csv);
else process.stdout.write(csv);
if (values.scores)
  writeFileSync(
    values.scores,
    toCsv(["run", "determination_id", "score", "implausibility", "model_deglaciation_cal_bp"], perConstraint),
  );
process.exit(failures ? 1 : 0);

// `npx tsx bench/checks-cli.ts <db> [--seed N] [--size full|small]`: seeds the database when it is
// empty, then prints the check bench for it.
import fs from "node:fs";
import { parseArgs } from "node:util";
import { migrateDatabase, openDatabase } from "#app/db/client.server.ts";
import { seedDemo } from "#seed/seed.server.ts";
import { benchChecks, formatCheckBench } from "./checks.ts";

const { values, positionals } = parseArgs({
  options: { seed: { type: "string" }, size: { type: "string", default: "full" } },
  allowPositionals: true,
});
const file = positionals[0] ?? "tmp/checks-bench.db";
const fresh = !fs.existsSync(file);
const db = openDatabase(file);
migrateDatabase(db);
if (fresh)
  await seedDemo(db, {
    size: values.size as "full" | "small",
    seed: values.seed ? Number(values.seed) : undefined,
    onStage: (s, ms) => console.log(`${s}: ${ms.toFixed(0)} ms`),
  });
for (const line of formatCheckBench(benchChecks(db), `seed ${values.seed ?? "default"}`)) console.log(line);

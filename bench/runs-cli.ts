// `npx tsx bench/runs-cli.ts <db>`: the model-run bench section alone, against a database already
// seeded with the full demo (npm run seed -- --size full).
import path from "node:path";
import { openDatabase } from "#app/db/client.server.ts";
import { benchRuns } from "./runs.ts";

const file = path.resolve(process.argv[2] ?? "tmp/bench/bench.db");
const db = openDatabase(file);
await benchRuns(db, file, (area, measure, value, goal) => console.log(`| ${area} | ${measure} | ${value} | ${goal ?? ""} |`));
db.$client.close();

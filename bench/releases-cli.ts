// `DATABASE_URL=<full demo db> npx tsx bench/releases-cli.ts`: the constraint-set and release bench
// alone, on a database already seeded with `npm run seed -- --size full`. Publishing writes bench
// releases into that database (versions b0, b1, … of “Bench release”, removed again afterwards).
import { openDatabase } from "#app/db/client.server.ts";
import { env } from "#app/utils/env.server.ts";
import { benchReleases } from "./releases.ts";

const db = openDatabase(env().DATABASE_URL);
const editor = db.$client.prepare("select id from users where email = 'editor@example.org'").get() as { id: number } | undefined;
if (!editor) throw new Error("No editor@example.org in DATABASE_URL: seed the full demo first.");
const median = (xs: number[]) => {
  const s = [...xs].sort((a, b) => a - b);
  return s.length % 2 ? s[(s.length - 1) / 2]! : (s[s.length / 2 - 1]! + s[s.length / 2]!) / 2;
};
try {
  await benchReleases(
    db,
    editor.id,
    (area, measure, value, goal) => console.log(`| ${area} | ${measure} | ${value} | ${goal ?? ""} |`),
    median,
  );
} finally {
  const ids = db.$client.prepare("select id from releases where name = 'Bench release'").all() as { id: number }[];
  for (const { id } of ids) {
    db.$client.prepare("delete from release_items where release_id = ?").run(id);
    db.$client.prepare("delete from releases where id = ?").run(id);
  }
  db.$client.close();
}

// Bench section "site-search": the submission form's site search at tens of thousands of sites.
// The section's own copy of the demo gets invented sites until it holds SITES in all, then times
// the site combobox's queries (name prefix, a word inside a name, nearest to a point), the picker
// map's sites-in-view query, the /api/site-search and /submit loaders, and the /submit loader's
// payload beside what sending every site would weigh. Wall and CPU time (this process) per query.
import { createSession } from "#app/auth/session.server.ts";
import { searchSites, sitesInBox } from "#app/models/registry/site-search.server.ts";
import { formOptions } from "#app/models/submission/form/schema.server.ts";
import { measure, median, ms, timeLoader, type BenchSection } from "./support.ts";

const SITES = 50_000;
const RUNS = 200;
const SYLLABLES = ["qar", "vel", "isk", "torn", "mer", "ulv", "sten", "brae", "kol", "fjar", "hild", "orm", "sael", "tup", "yrr"];
const KINDS = ["Bog", "Delta", "Moraine", "Terrace", "Fen", "Cove", "Bluff", "Lake", "Esker", "Kettle"];

function grow(db: Parameters<BenchSection["run"]>[0]["db"], userId: number): number {
  const sqlite = db.$client;
  const have = sqlite.prepare("select count(*) from sites").pluck().get() as number;
  const columns = sqlite.prepare("select name from pragma_table_info('sites')").pluck().all() as string[];
  const owner = columns.includes("created_by") ? ", created_by" : "";
  const insert = sqlite.prepare(`insert into sites (name, latitude, longitude${owner}) values (?, ?, ?${owner ? ", ?" : ""})`);
  let s = 11;
  const rand = () => {
    s = (s * 1103515245 + 12345) % 2147483648;
    return s / 2147483648;
  };
  const pick = <T>(xs: readonly T[]) => xs[Math.floor(rand() * xs.length)]!;
  sqlite.transaction(() => {
    for (let i = have; i < SITES; i++) {
      const name = `${pick(SYLLABLES)}${pick(SYLLABLES)} ${pick(KINDS)} ${i}`;
      const word = name[0]!.toUpperCase() + name.slice(1);
      const values: unknown[] = [word, 55 + rand() * 7, -75 + rand() * 17];
      if (owner) values.push(userId);
      insert.run(...values);
    }
  })();
  return SITES - have;
}

/** Median wall and CPU time of RUNS calls, each with its own argument. */
function timed(run: (i: number) => unknown): { wall: number; cpu: number } {
  run(0); // warm the statement cache
  const walls: number[] = [];
  const cpus: number[] = [];
  for (let i = 0; i < RUNS; i++) {
    const m = measure(() => run(i));
    walls.push(m.ms);
    cpus.push(m.cpuMs);
  }
  return { wall: median(walls), cpu: median(cpus) };
}

const both = (t: { wall: number; cpu: number }) => `${ms(t.wall)} wall, ${ms(t.cpu)} CPU`;

export const bench: BenchSection = {
  name: "site-search",
  about: `site combobox search, sites in a map view and the /submit loader at ${SITES.toLocaleString("en")} sites (median of ${RUNS})`,
  async run({ db, report, userId }) {
    const contributor = userId("contributor@example.org");
    const added = grow(db, contributor);
    const total = db.$client.prepare("select count(*) from sites").pluck().get() as number;
    console.log(`Site search at ${total.toLocaleString("en")} sites (${added.toLocaleString("en")} invented here)…`);
    const area = "site search";
    const prefixes = SYLLABLES.flatMap((a) => SYLLABLES.map((b) => `${a}${b[0]}`));
    report(
      area,
      "name starts with 4 letters (20 answers)",
      both(timed((i) => searchSites(db, { q: prefixes[i % prefixes.length] }))),
      "≤ 20 ms",
    );
    report(
      area,
      "a word inside the name ('Kettle 4…')",
      both(timed((i) => searchSites(db, { q: `Kettle ${4 + (i % 5)}` }))),
      "≤ 50 ms",
    );
    report(
      area,
      "a word found in no name (scans every name)",
      both(timed((i) => searchSites(db, { q: `Nowhere ${i}` }))),
      "≤ 50 ms",
    );
    report(
      area,
      "nearest 20 to a point",
      both(timed((i) => searchSites(db, { near: { latitude: 56 + (i % 50) * 0.1, longitude: -70 + (i % 30) * 0.3 } }))),
      "≤ 20 ms",
    );
    report(
      area,
      "sites in a whole-region view (capped at 500)",
      both(timed(() => sitesInBox(db, { south: 54, west: -77, north: 63, east: -56 }))),
      "≤ 20 ms",
    );
    report(
      area,
      "sites in a zoomed view (0.5° × 1°)",
      both(timed((i) => sitesInBox(db, { south: 57 + (i % 20) * 0.1, west: -68, north: 57.5 + (i % 20) * 0.1, east: -67 }))),
      "≤ 10 ms",
    );

    const session = await createSession(contributor, new Request("http://bench.local/"));
    const cookie = session.cookie.split(";")[0]!;
    const siteSearch = await import("#app/routes/resources/site-search.ts");
    const submit = await import("#app/routes/contribute/submit.tsx");
    const loaderRuns = async (url: string, mod: { loader: (args: never) => unknown }) => {
      await timeLoader(mod, url, cookie);
      const walls: number[] = [];
      const c0 = process.cpuUsage();
      for (let i = 0; i < 50; i++) walls.push(await timeLoader(mod, url, cookie));
      const c = process.cpuUsage(c0);
      return { wall: median(walls), cpu: (c.user + c.system) / 1000 / 50 };
    };
    report(
      area,
      "GET /api/site-search?q=qarv (loader)",
      `${both(await loaderRuns("/api/site-search?q=qarv", siteSearch))} (CPU: mean)`,
    );
    report(area, "GET /submit (loader)", `${both(await loaderRuns("/submit", submit))} (CPU: mean)`);

    const payload = JSON.stringify(formOptions(db)).length;
    const everySite = JSON.stringify(
      db.$client.prepare("select id, name, latitude, longitude from sites order by name, id").all(),
    ).length;
    report(
      area,
      "/submit options payload",
      `${(payload / 1024).toFixed(1)} KiB (every site would add ${(everySite / 1024 / 1024).toFixed(1)} MiB)`,
    );
  },
};

// Bench section "explore": the Explore loader over ten filter/sort combinations, and the
// determination page loader.
import { createSession } from "#app/auth/session.server.ts";
import { median, ms, timeLoader, type BenchSection } from "./support.ts";

const COMBOS: [string, string][] = [
  ["default (newest first)", "/explore"],
  ["radiocarbon, by calibrated median", "/explore?method=radiocarbon&sort=median&dir=asc"],
  ["luminescence, by measured age", "/explore?method=luminescence&sort=age&dir=desc"],
  ["marine shell, minimum-limiting", "/explore?material=marine%20shell&kind=minimum"],
  ["text search 'KVX'", "/explore?q=KVX"],
  ["site name contains 'a', by site", "/explore?site=a&sort=site"],
  ["calibrated 10,000–12,000 cal BP", "/explore?calFrom=10000&calTo=12000&sort=median"],
  ["graded ≥ usable, by grade", "/explore?grade=2&sort=grade&dir=desc"],
  ["measured 8,000–9,000 ¹⁴C BP, page 3", "/explore?ageFrom=8000&ageTo=9000&page=3"],
  ["status submitted, last page-ish", "/explore?status=submitted&page=40"],
];

export const bench: BenchSection = {
  name: "explore",
  about: "Explore loader (10 filter/sort combinations × 30) and the determination page loader",
  async run({ db, report, userId }) {
    const exploreRoute = await import("#app/routes/explore/explore.tsx");
    const determinationRoute = await import("#app/routes/explore/determination.tsx");
    const session = await createSession(userId("modeller@example.org"), new Request("http://bench.local/"));
    const cookie = session.cookie.split(";")[0]!;

    console.log("Explore loader, 10 filter/sort combinations × 30 runs…");
    const medians: number[] = [];
    for (const [label, url] of COMBOS) {
      await timeLoader(exploreRoute, url, cookie); // warm statement cache
      const runs: number[] = [];
      for (let i = 0; i < 30; i++) runs.push(await timeLoader(exploreRoute, url, cookie));
      const m = median(runs);
      medians.push(m);
      report("explore", label, ms(m), "≤ 30 ms");
    }
    report("explore", "median over the 10 combinations", ms(median(medians)), "≤ 30 ms");

    const ids = db.$client.prepare("select id from determinations order by random() limit 30").pluck().all() as number[];
    const page = (id: number) => timeLoader(determinationRoute, `/determinations/${id}`, cookie, { id: String(id) });
    for (const id of ids) await page(id);
    const runs: number[] = [];
    for (const id of ids) runs.push(await page(id));
    report("determination", "page loader, median of 30 determinations", ms(median(runs)));
  },
};

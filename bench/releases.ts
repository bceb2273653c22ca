// Constraint sets and releases (issue 10): full-demo downloads, the live count, publishing 5,000 items.
import type { Db } from "#app/db/client.server.ts";
import { selectionCount } from "#app/models/registry/constraints.server.ts";
import { selectConstraints, selectionResponse } from "#app/models/releases/selection-download.server.ts";
import { publishRelease } from "#app/models/releases/releases.server.ts";
import { parseConstraintFilter } from "#app/utils/constraint-filter.ts";

type Report = (area: string, measure: string, value: string, goal?: string) => void;

function filter(q: string) {
  const r = parseConstraintFilter(new URLSearchParams(q));
  if (!r.ok) throw new Error(r.errors.join("; "));
  return r.filter;
}

async function timeDownload(db: Db, format: "csv" | "json", densities: boolean): Promise<{ ms: number; bytes: number }> {
  const t0 = performance.now();
  const res = selectionResponse(db, selectConstraints(db, filter("")), format, { densities });
  const bytes = (await res.arrayBuffer()).byteLength;
  return { ms: performance.now() - t0, bytes };
}

export async function benchReleases(db: Db, userId: number, report: Report, median: (xs: number[]) => number) {
  const csv: number[] = [];
  let csvBytes = 0;
  for (let i = 0; i < 5; i++)
    ({ ms: csv[i], bytes: csvBytes } = (await timeDownload(db, "csv", false)) as { ms: number; bytes: number });
  const n = selectionCount(db, filter(""));
  report(
    "constraints",
    `CSV download, full demo (${n} rows, ${(csvBytes / 1e6).toFixed(1)} MB), median of 5`,
    `${median(csv).toFixed(0)} ms`,
    "≤ 200 ms",
  );
  const dense: number[] = [];
  let denseBytes = 0;
  for (let i = 0; i < 3; i++)
    ({ ms: dense[i], bytes: denseBytes } = (await timeDownload(db, "json", true)) as { ms: number; bytes: number });
  report(
    "constraints",
    `JSON with densities, full demo (${(denseBytes / 1e6).toFixed(0)} MB), median of 3`,
    `${median(dense).toFixed(0)} ms`,
    "≤ 1 s",
  );
  const f = filter("bbox=-70,56,-62,60&from_cal_bp=9000&to_cal_bp=11000");
  const counts: number[] = [];
  for (let i = 0; i < 30; i++) {
    const t0 = performance.now();
    selectionCount(db, f);
    counts.push(performance.now() - t0);
  }
  report("constraints", "live count, region + time window, median of 30", `${median(counts).toFixed(1)} ms`, "≤ 20 ms");
  const ids = db.$client.prepare("select count(*) n from determinations").get() as { n: number };
  const pub: number[] = [];
  let items = 0;
  for (let i = 0; i < 3; i++) {
    const t0 = performance.now();
    items = publishRelease(db, {
      name: "Bench release",
      version: `b${i}`,
      filter: filter(""),
      userId,
      baseUrl: "http://localhost/releases/",
    }).count;
    pub.push(performance.now() - t0);
  }
  report("releases", `publish ${items} items (registry ${ids.n}), median of 3`, `${(median(pub) / 1000).toFixed(2)} s`, "≤ 2 s");
}

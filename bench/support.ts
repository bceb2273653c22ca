// What every bench section shares: the context it runs in, the report it writes to, small helpers.
import net from "node:net";
import type { Db } from "#app/db/client.server.ts";

export type Report = (area: string, measure: string, value: string, goal?: string) => void;

export interface BenchContext {
  /** A fresh copy of the seeded full-size demo, the section's own (writes do not reach other sections). */
  db: Db;
  /** That copy's file. */
  dbFile: string;
  /** tmp/bench: room for the section's own files. */
  dir: string;
  report: Report;
  /** A demo person's id by address (seed/seed.server.ts DEMO_USERS). */
  userId: (email: string) => number;
}

export interface BenchSection {
  /** The name `npm run bench -- --only NAME` takes. */
  name: string;
  /** One line for `--list`. */
  about: string;
  run: (ctx: BenchContext) => Promise<void> | void;
  /** Lines printed after the main table (a section's own table). */
  after?: () => string | undefined;
}

export const median = (xs: number[]) => {
  const s = [...xs].sort((a, b) => a - b);
  return s.length % 2 ? s[(s.length - 1) / 2]! : (s[s.length / 2 - 1]! + s[s.length / 2]!) / 2;
};

export const ms = (x: number) => `${x < 10 ? x.toFixed(2) : x.toFixed(0)} ms`;
export const seconds = (x: number) => `${(x / 1000).toFixed(2)} s`;

/** Wall and CPU time (user + system, this process) of one synchronous step, in ms. */
export function measure<T>(step: () => T): { value: T; ms: number; cpuMs: number } {
  const t0 = performance.now();
  const c0 = process.cpuUsage();
  const value = step();
  const c = process.cpuUsage(c0);
  return { value, ms: performance.now() - t0, cpuMs: (c.user + c.system) / 1000 };
}

export function freePort(): Promise<number> {
  return new Promise((resolve, reject) => {
    const srv = net.createServer();
    srv.once("error", reject);
    srv.listen(0, "127.0.0.1", () => {
      const { port } = srv.address() as net.AddressInfo;
      srv.close(() => resolve(port));
    });
  });
}

/** Calls a route loader as a signed-in person would, and returns how long it took (ms). */
export async function timeLoader(
  mod: { loader: (args: never) => unknown },
  url: string,
  cookie: string,
  params: Record<string, string> = {},
): Promise<number> {
  const request = new Request(`http://bench.local${url}`, { headers: { Cookie: cookie } });
  const start = performance.now();
  await mod.loader({ request, params, context: {} } as never);
  return performance.now() - start;
}

/** The upload template's columns the benches' invented radiocarbon sheets fill. */
export const SHEET_HEADERS = [
  "site_name",
  "latitude",
  "longitude",
  "sample_code",
  "material",
  "method",
  "lab_code",
  "lab_name",
  "c14_age",
  "c14_error",
  "curve",
  "delta_r",
  "delta_r_error",
  "delta_r_curve",
  "constraint_kind",
];

/**
 * Invented radiocarbon rows in SHEET_HEADERS' order, a third of them marine shells on Marine20
 * with a ΔR, spread over `sites` places; codes carry `tag`, so sheets of different tags never collide.
 */
export function radiocarbonSheetRows(o: {
  count: number;
  tag: string;
  place: string;
  sites: number;
  samplePrefix: string;
  labCodePrefix: string;
  labName: string;
}): (string | number)[][] {
  return Array.from({ length: o.count }, (_, i) => {
    const marine = i % 3 === 0;
    return [
      `${o.place} ${o.tag} ${i % o.sites}`,
      57 + (i % o.sites) / (o.sites / 2),
      -64 - (i % 97) / 50,
      `${o.samplePrefix}-${o.tag}-${i}`,
      marine ? "marine shell" : "plant macrofossil",
      "radiocarbon",
      `${o.labCodePrefix}${o.tag}${i}`,
      o.labName,
      8000 + (i % 3000),
      30 + (i % 50),
      marine ? "marine20" : "intcal20",
      marine ? 50 : "",
      marine ? 40 : "",
      marine ? "marine20" : "",
      "minimum",
    ];
  });
}

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

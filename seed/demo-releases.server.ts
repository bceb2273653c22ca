// Two published demo releases, so a first look at /releases has something to open and a diff to read.
import type { Db } from "#app/db/client.server.ts";
import { publishRelease } from "#app/models/releases/releases.server.ts";
import { parseConstraintFilter } from "#app/utils/constraint-filter.ts";
import { env } from "#app/utils/env.server.ts";

const NAME = "Demo ice cap deglaciation constraints";
const DAY_MS = 86_400_000;

function filter(query: string) {
  const parsed = parseConstraintFilter(new URLSearchParams(query));
  if (!parsed.ok) throw new Error(parsed.errors.join("; "));
  return parsed.filter;
}

/** Version 1: secure and usable minimum-limiting and direct dates; version 2 adds the maximum-limiting ones. */
export function seedDemoReleases(db: Db, editorId: number, now = new Date()): string[] {
  const baseUrl = `${(env().APP_URL ?? "http://localhost:3000").replace(/\/$/, "")}/releases/`;
  const first = publishRelease(db, {
    name: NAME,
    version: "1",
    description: "Invented demo data. Minimum-limiting and direct dates graded usable or secure, no reworked material.",
    filter: filter("min_grade=2&kinds=minimum,direct&exclude_flags=reworked"),
    userId: editorId,
    baseUrl,
    now: new Date(now.getTime() - 30 * DAY_MS),
  });
  const second = publishRelease(db, {
    name: NAME,
    version: "2",
    description: "Invented demo data. Every constraint kind graded usable or secure, no reworked material.",
    filter: filter("min_grade=2&exclude_flags=reworked"),
    userId: editorId,
    baseUrl,
    now,
  });
  return [first.slug, second.slug];
}

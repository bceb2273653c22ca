// Calendar densities written as JSON text (`[p0,p1,…]`), kept in memory by the SHA-256 of the
// stored density. The key is the content itself, so an entry can never be stale: a calibration's
// density never changes (recalibration writes a new calibration with its own hash), and the same
// density always writes the same text. Downloads with densities ask here first and read and write
// only the densities not held; the first full download fills the cache, later ones skip both the
// blob reads and the formatting. Bounded by DENSITY_TEXT_CACHE_MB (least recently used out first).
import type { Db } from "#app/db/client.server.ts";
import { decodeDensity } from "#app/models/calibration/calibrations.server.ts";
import { env } from "#app/utils/env.server.ts";
import { probabilityArrayBytes } from "#app/utils/probability-text.ts";

const held = new Map<string, Uint8Array>();
let heldBytes = 0;

/** The text of the density with this hash, when held (and marks it recently used). */
export function heldDensityText(sha256: string | null | undefined): Uint8Array | undefined {
  if (!sha256) return undefined;
  const text = held.get(sha256);
  if (text) {
    held.delete(sha256);
    held.set(sha256, text);
  }
  return text;
}

/** Writes a density as text and keeps it under its hash (when it has one and fits the bound). */
export function densityText(sha256: string | null | undefined, values: ArrayLike<number>): Uint8Array {
  const text = probabilityArrayBytes(values);
  const limit = env().DENSITY_TEXT_CACHE_MB * 1024 * 1024;
  if (!sha256 || text.byteLength > limit || held.has(sha256)) return text;
  for (const [key, old] of held) {
    if (heldBytes + text.byteLength <= limit) break;
    held.delete(key);
    heldBytes -= old.byteLength;
  }
  held.set(sha256, text);
  heldBytes += text.byteLength;
  return text;
}

/** How much is held (tests and the bench). */
export function densityTextHeld(): { entries: number; bytes: number } {
  return { entries: held.size, bytes: heldBytes };
}

/** Forgets everything held (the bench's cold runs). */
export function clearDensityTexts(): void {
  held.clear();
  heldBytes = 0;
}

/**
 * Writes the current calibrations' densities into the cache in the background after a start, a
 * slice at a time with a turn of the event loop between slices, so requests keep being answered
 * and the first download with densities after a restart costs what a later one does. Stops when
 * the bound is reached (the cache would only evict what it just wrote). Resolves with what it held.
 */
export async function warmDensityTexts(
  db: Db,
  options: { slice?: number; pause?: () => Promise<void> } = {},
): Promise<{ entries: number; bytes: number }> {
  const slice = options.slice ?? 250;
  const pause = options.pause ?? (() => new Promise<void>((resolve) => setImmediate(resolve)));
  const ids = db.$client
    .prepare(
      "select id from calibrations where is_current = 1 and density is not null and density_sha256 is not null order by id",
    )
    .pluck()
    .all() as number[];
  const read = db.$client.prepare(
    "select density_sha256 as sha, density as blob, density_start_cal_bp as start from calibrations where id = ?",
  );
  for (let i = 0; i < ids.length; i += slice) {
    for (const id of ids.slice(i, i + slice)) {
      const row = read.get(id) as { sha: string; blob: Buffer | null; start: number | null } | undefined;
      if (!row?.blob || row.start === null || held.has(row.sha)) continue;
      const before = held.size;
      densityText(row.sha, decodeDensity(row.blob, row.start).values);
      // At the bound a new text pushes out one just written (or is not kept): stop there.
      if (held.size <= before) return densityTextHeld();
    }
    await pause();
  }
  return densityTextHeld();
}

// Check 7, duplicates: the same lab code written another way (case, spaces, dashes, leading
// zeros), or a near-copy already in the registry (same place, same method, same age and error).

import { result, type CheckItem, type CheckResult } from "./types.ts";

const CHECK = "duplicates" as const;
/** Two entries this close count as the same place, km. */
export const SAME_PLACE_KM = 1;

/** KVX-01234, "kvx 1234" and "KVX_1234" all become KVX1234. */
export function normaliseLabCode(code: string): string {
  return code
    .normalize("NFKC")
    .toUpperCase()
    .replace(/[^A-Z0-9]+/g, "")
    .replace(/(^|[A-Z])0+(?=\d)/g, "$1");
}

/** The measured value that a copy would repeat exactly. */
function fingerprint(item: CheckItem): string | null {
  if (item.method === "radiocarbon" && item.c14AgeYr !== null && item.c14ErrorYr !== null) {
    return `rc|${item.c14AgeYr}|${item.c14ErrorYr}|${item.isLimit ? 1 : 0}`;
  }
  if (item.method === "luminescence" && item.deGy !== null && item.doseRateGyPerKa !== null) {
    return `lum|${item.deGy}|${item.deErrorGy}|${item.doseRateGyPerKa.toPrecision(6)}`;
  }
  return null;
}

export interface DuplicateIndex {
  /** Other determinations whose normalised lab code is the same. */
  sameCode(item: CheckItem): { id: number; labCode: string }[];
  /** Other determinations with the same measured values. */
  sameValues(item: CheckItem): CheckItem[];
}

/**
 * `codes` may hold every lab code in the registry (cheap to load) while `items` holds only the
 * determinations whose values are compared.
 */
export function buildDuplicateIndex(
  items: readonly CheckItem[],
  codes: readonly { id: number; labCode: string }[],
): DuplicateIndex {
  const byCode = new Map<string, { id: number; labCode: string }[]>();
  for (const c of codes) {
    const k = normaliseLabCode(c.labCode);
    const list = byCode.get(k);
    if (list) list.push(c);
    else byCode.set(k, [c]);
  }
  const byValue = new Map<string, CheckItem[]>();
  for (const it of items) {
    const k = fingerprint(it);
    if (!k) continue;
    const list = byValue.get(k);
    if (list) list.push(it);
    else byValue.set(k, [it]);
  }
  return {
    sameCode: (item) => (byCode.get(normaliseLabCode(item.labCode)) ?? []).filter((c) => c.id !== item.id),
    sameValues: (item) => {
      const k = fingerprint(item);
      return k ? (byValue.get(k) ?? []).filter((o) => o.id !== item.id) : [];
    },
  };
}

function km(a: CheckItem, b: CheckItem): number {
  const kx = 111.32 * Math.cos((a.latitude * Math.PI) / 180);
  return Math.hypot((a.longitude - b.longitude) * kx, (a.latitude - b.latitude) * 110.574);
}

export function checkDuplicates(item: CheckItem, index: DuplicateIndex): CheckResult {
  const same = index.sameCode(item);
  if (same.length > 0) {
    return result(
      CHECK,
      "conflict",
      `The lab code ${item.labCode} is already in the registry as ${same.map((s) => s.labCode).join(", ")} (the same code written another way).`,
      {
        labCodes: same.map((s) => s.labCode),
        determinationIds: same.map((s) => s.id),
        normalised: normaliseLabCode(item.labCode),
      },
    );
  }
  const copies = index.sameValues(item).filter((o) => o.material === item.material && km(item, o) <= SAME_PLACE_KM);
  if (copies.length > 0) {
    const c = copies[0];
    return result(
      CHECK,
      "warning",
      `A near-copy: ${c.labCode} has the same place (${km(item, c).toFixed(2)} km), material and ${item.method === "radiocarbon" ? "age and error" : "De, error and dose rate"}.`,
      { labCodes: copies.map((o) => o.labCode), determinationIds: copies.map((o) => o.id), km: km(item, c) },
    );
  }
  return result(CHECK, "pass", "No other determination shares its lab code or repeats its values at the same place.");
}

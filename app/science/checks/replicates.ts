// Check 3, replicates: determinations on one sample, or on one level of one unit, tested for
// consistency with the Ward & Wilson (1978) T statistic against χ²(n − 1) at 0.05. Radiocarbon in
// 14C years and only within one reservoir (same curve and ΔR); luminescence in ka.

import { wardWilson, type AgeWithError } from "../consistency.ts";
import { luminescenceAge, luminescenceAgeToCalBp } from "../luminescence.ts";
import { result, yr, type CheckItem, type CheckResult } from "./types.ts";

const CHECK = "replicates" as const;
export const REPLICATE_SIGNIFICANCE = 0.05;
/** Beyond this significance the inconsistency is a conflict rather than a warning. */
export const REPLICATE_CONFLICT_SIGNIFICANCE = 0.001;

/** The level a determination belongs to: its sample, or its site, unit and depth when all are known. */
export function levelKey(item: CheckItem): string {
  if (item.stratUnit && item.depthCm !== null) return `site:${item.siteId}|${item.stratUnit}|${item.depthCm}`;
  return `sample:${item.sampleId}`;
}

/** What may be pooled with what: the method, and for radiocarbon the reservoir. */
function poolKey(item: CheckItem): string {
  if (item.method !== "radiocarbon") return item.method;
  return `radiocarbon|${(item.curveName ?? "intcal20").toLowerCase()}|${item.deltaRYr ?? 0}|${item.deltaRErrorYr ?? 0}`;
}

/** Age and error in the unit the test uses: 14C yr for radiocarbon, ka (before 1950) for luminescence. */
export function replicateValue(item: CheckItem): AgeWithError | null {
  if (item.method === "radiocarbon") {
    if (item.isLimit || item.c14AgeYr === null || !(item.c14ErrorYr! > 0)) return null;
    return { age: item.c14AgeYr, error: item.c14ErrorYr! };
  }
  if (item.method === "luminescence") {
    const { deGy, doseRateGyPerKa, deErrorGy, doseRateErrorGyPerKa } = item;
    if (!(deGy! > 0) || !(doseRateGyPerKa! > 0)) return null;
    const a = luminescenceAge(
      { value: deGy!, error: deErrorGy ?? 0 },
      { value: doseRateGyPerKa!, error: doseRateErrorGyPerKa ?? 0 },
    );
    if (!(a.errorKa > 0)) return null;
    const bp = luminescenceAgeToCalBp(a.ageKa, a.errorKa, item.measurementYear ?? 1950);
    return { age: bp.calBp / 1000, error: bp.error / 1000 };
  }
  return null;
}

/** Groups of replicates: same level and same pool, two or more usable values. */
export function replicateGroups(items: readonly CheckItem[]): Map<number, CheckItem[]> {
  const byKey = new Map<string, CheckItem[]>();
  for (const it of items) {
    if (!replicateValue(it)) continue;
    const key = `${levelKey(it)}#${poolKey(it)}`;
    const list = byKey.get(key);
    if (list) list.push(it);
    else byKey.set(key, [it]);
  }
  const out = new Map<number, CheckItem[]>();
  for (const list of byKey.values()) if (list.length > 1) for (const it of list) out.set(it.id, list);
  return out;
}

export function checkReplicates(item: CheckItem, group: readonly CheckItem[] | undefined): CheckResult {
  if (!group || group.length < 2) return result(CHECK, "pass", "No replicate on the same sample or level to compare with.");
  const values = group.map((g) => replicateValue(g)!);
  const ww = wardWilson(values, REPLICATE_SIGNIFICANCE);
  const conflictCritical = wardWilson(values, REPLICATE_CONFLICT_SIGNIFICANCE).critical;
  const radiocarbon = item.method === "radiocarbon";
  const pooled = radiocarbon
    ? `${yr(ww.pooledMean)} ± ${yr(ww.pooledError)} ¹⁴C yr BP`
    : `${ww.pooledMean.toFixed(2)} ± ${ww.pooledError.toFixed(2)} ka`;
  const details = {
    n: group.length,
    labCodes: group.map((g) => g.labCode),
    pooledMean: ww.pooledMean,
    pooledError: ww.pooledError,
    unit: radiocarbon ? "¹⁴C yr BP" : "ka",
    t: ww.t,
    df: ww.df,
    critical: ww.critical,
    pValue: ww.pValue,
  };
  const stat = `T = ${ww.t.toFixed(2)} against χ²(${ww.df}) = ${ww.critical.toFixed(2)} at 0.05`;
  if (ww.consistent) {
    return result(CHECK, "pass", `The ${group.length} replicates agree (${stat}); pooled ${pooled}.`, details);
  }
  const mine = replicateValue(item)!;
  const z = (mine.age - ww.pooledMean) / mine.error;
  const flag = z > 0 ? (item.method === "luminescence" ? "partial_bleaching" : "old_carbon") : "young_carbon";
  return result(
    CHECK,
    ww.t >= conflictCritical ? "conflict" : "warning",
    `The ${group.length} replicates disagree (${stat}, p = ${ww.pValue.toPrecision(2)}); pooled ${pooled}, this one ${z > 0 ? "older" : "younger"} by ${Math.abs(z).toFixed(1)}σ.`,
    { ...details, zSelf: z },
    group.length > 2 && Math.abs(z) > 2 ? flag : null,
  );
}

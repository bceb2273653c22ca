// A CF time coordinate mapped to cal BP. Units that say how they relate to present (AD 1950)
// are read without asking; otherwise the modeller states the cal BP age of model time 0 (the
// time offset) and model time is taken to run forward from it.

export type TimeMapping = { ok: true; calBp: number[]; how: string } | { ok: false; message: string };

const SCALES: Record<string, number> = {
  year: 1,
  years: 1,
  yr: 1,
  yrs: 1,
  a: 1,
  ka: 1000,
  kyr: 1000,
  kyrs: 1000,
  kiloyear: 1000,
  kiloyears: 1000,
};

function scaleOf(unit: string): number | null {
  return SCALES[unit.toLowerCase()] ?? null;
}

/**
 * Maps raw time values to cal BP. `offset` (cal BP of model time 0) is used only when the
 * units do not say how they map.
 */
export function mapTimeAxis(values: ArrayLike<number>, units: string | undefined, offset?: number | null): TimeMapping {
  const u = (units ?? "").trim();
  const raw = Array.from(values);
  // "<unit> BP", "cal BP", "cal yr BP", "ka BP", "kyr BP": age before AD 1950, counting back.
  const bp =
    /^(?:(cal(?:ibrated)?)\s*)?(years?|yrs?|yr|a|ka|kyrs?|kiloyears?)?\s*(?:cal\s*)?(?:before\s+present|b\.?p\.?)$/i.exec(u);
  if (bp && (bp[1] || bp[2])) {
    const scale = bp[2] ? scaleOf(bp[2])! : 1;
    return { ok: true, calBp: raw.map((v) => v * scale), how: `units "${u}": ages before AD 1950` };
  }
  // "<unit> since YYYY[-MM-DD…]": forward model time from a calendar year.
  const since = /^(years?|yrs?|yr|a|ka|kyrs?|kiloyears?|days?)\s+since\s+(-?\d{1,6})(?:-\d{1,2}(?:-\d{1,2})?(?:[ T].*)?)?$/i.exec(
    u,
  );
  if (since) {
    const scale = /^days?$/i.test(since[1]) ? 1 / 365.2425 : scaleOf(since[1])!;
    const ref = Number(since[2]);
    return {
      ok: true,
      calBp: raw.map((v) => 1950 - ref - v * scale),
      how: `units "${u}": model time counts forward from AD ${ref}`,
    };
  }
  const plain = scaleOf(u) ?? (u === "" ? 1 : null);
  if (offset !== undefined && offset !== null && Number.isFinite(offset) && plain !== null) {
    return { ok: true, calBp: raw.map((v) => offset - v * plain), how: `time offset: model time 0 is ${offset} cal BP` };
  }
  if (plain === null && offset !== undefined && offset !== null) {
    return { ok: false, message: `The time axis's units "${u}" are not a length of time Thawline knows (years, ka, kyr).` };
  }
  return {
    ok: false,
    message: `The time axis's units "${u || "(none)"}" do not say how model time maps to cal BP: give a time offset (the cal BP age of model time 0; model time then runs forward).`,
  };
}

/**
 * First and last slice of a waiting run in cal BP under a stated offset, as the time-mapping step
 * previews it: the same rule as mapTimeAxis (model time runs forward from the offset).
 */
export function previewCalBp(units: string, first: number, last: number, offset: number): { first: number; last: number } {
  const scale = scaleOf(units.trim()) ?? 1;
  return { first: offset - first * scale, last: offset - last * scale };
}

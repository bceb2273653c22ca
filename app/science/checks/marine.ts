// Check 2, marine caveats: marine material needs a marine curve and a ΔR derived against that
// curve; Marine20 is used with great caution poleward of 40° before the Holocene
// (Heaton et al. 2020, 2023; CHECK_VALUES A5).

import { curveWords } from "#app/utils/labels.ts";
import { hemisphereWarning } from "../reservoir.ts";
import { result, yr, type CheckItem, type CheckResult } from "./types.ts";

/** Start of the Holocene, cal BP [common practice: 11,700 b2k ≈ 11,650 cal BP; the round figure is used]. */
export const HOLOCENE_START_CAL_BP = 11_700;
export const MARINE20_CAUTION_LATITUDE = 40;

const CHECK = "marine" as const;

function isMarineCurve(name: string | null): boolean {
  return name !== null && /^marine/i.test(name);
}

export function checkMarine(item: CheckItem): CheckResult {
  if (item.method !== "radiocarbon") return result(CHECK, "pass", "Not a radiocarbon date: no reservoir correction applies.");
  const marineCurve = isMarineCurve(item.curveName);
  if (!item.marineMaterial && !marineCurve) {
    // An atmospheric curve belongs to one hemisphere; a site on the other side is calibrated wrongly.
    const hemisphere = item.curveName ? hemisphereWarning(item.latitude, item.curveName, curveWords(item.curveName)) : null;
    if (hemisphere) return result(CHECK, "warning", hemisphere, { latitude: item.latitude, curveName: item.curveName });
    return result(CHECK, "pass", "Terrestrial material on an atmospheric curve.");
  }
  if (item.marineMaterial && !marineCurve) {
    return result(
      CHECK,
      "warning",
      `Marine material (${item.material}) calibrated on ${item.curveName ? curveWords(item.curveName) : "the atmospheric curve"}: the marine reservoir age is not corrected.`,
      { material: item.material, curveName: item.curveName },
      "reservoir_uncertain",
    );
  }
  const curve = (item.curveName ?? "").toLowerCase();
  if (item.deltaRYr === null) {
    return result(
      CHECK,
      "warning",
      `No local ΔR given for a marine date on ${curveWords(item.curveName)}: the calibration assumes ΔR = 0 with no error.`,
      { curveName: item.curveName },
      "reservoir_uncertain",
    );
  }
  const dr = `ΔR ${yr(item.deltaRYr)} ± ${yr(item.deltaRErrorYr ?? 0)}`;
  if (item.deltaRCurve === null || item.deltaRCurve.trim() === "") {
    return result(
      CHECK,
      "warning",
      `${dr} is given without the curve it was derived against; ΔR values do not transfer between marine curves.`,
      { deltaRYr: item.deltaRYr, deltaRErrorYr: item.deltaRErrorYr, curveName: item.curveName },
      "reservoir_uncertain",
    );
  }
  if (item.deltaRCurve.toLowerCase() !== curve) {
    return result(
      CHECK,
      "warning",
      `${dr} was derived against ${curveWords(item.deltaRCurve)} but the date is calibrated on ${curveWords(item.curveName)}; values from older curves shift by roughly −140 yr for Marine20.`,
      { deltaRYr: item.deltaRYr, deltaRCurve: item.deltaRCurve, curveName: item.curveName },
      "reservoir_uncertain",
    );
  }
  const median = item.calendar?.medianCalBp ?? null;
  if (Math.abs(item.latitude) > MARINE20_CAUTION_LATITUDE && median !== null && median > HOLOCENE_START_CAL_BP) {
    return result(
      CHECK,
      "note",
      `At ${Math.abs(item.latitude).toFixed(1)}° ${item.latitude >= 0 ? "N" : "S"} and ${yr(median)} cal BP (before the Holocene), Marine20 is to be used with great caution poleward of 40°.`,
      { latitude: item.latitude, medianCalBp: median, deltaRYr: item.deltaRYr },
    );
  }
  return result(CHECK, "pass", `${dr} against ${curveWords(item.curveName)}, as the curve requires.`, {
    deltaRYr: item.deltaRYr,
    deltaRErrorYr: item.deltaRErrorYr,
  });
}

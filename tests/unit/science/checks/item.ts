// A determination as the checks see it, with plain defaults a test overrides.
import { normalDensity } from "#app/science/density.ts";
import { densityMoments, type CheckItem } from "#app/science/checks/types.ts";

let nextId = 1;

export function calendarOf(mean: number, sd: number): NonNullable<CheckItem["calendar"]> {
  const density = normalDensity(mean, sd);
  const m = densityMoments(density);
  return { density, medianCalBp: mean, meanCalBp: m.mean, sdYears: m.sd };
}

export function item(over: Partial<CheckItem> & { age?: [number, number] } = {}): CheckItem {
  const id = over.id ?? nextId++;
  const { age, ...rest } = over;
  return {
    id,
    labCode: `TST-${id}`,
    labId: 1,
    method: "radiocarbon",
    constraintKind: "minimum",
    sampleId: id,
    siteId: id,
    latitude: 57,
    longitude: -65,
    material: "plant macrofossil",
    marineMaterial: false,
    depthCm: null,
    stratUnit: null,
    stratOrder: null,
    grade: null,
    c14AgeYr: 9000,
    c14ErrorYr: 40,
    f14c: null,
    f14cError: null,
    isLimit: false,
    curveName: "intcal20",
    deltaRYr: null,
    deltaRErrorYr: null,
    deltaRCurve: null,
    deGy: null,
    deErrorGy: null,
    doseRateGyPerKa: null,
    doseRateErrorGyPerKa: null,
    measurementYear: null,
    calendar: age ? calendarOf(age[0], age[1]) : calendarOf(10000, 100),
    calibrationError: null,
    ...rest,
  };
}

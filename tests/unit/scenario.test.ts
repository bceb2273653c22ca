import { afterAll, beforeAll, describe, expect, it, vi } from "vitest";
import { prepareCurve, preparedCurveAt, type PreparedCurve } from "#app/science/curve.ts";
import { luminescenceAgeToCalBp } from "#app/science/luminescence.ts";
import { doseRateFromFields } from "#app/science/dose-rate-fields.ts";
import { loadLand } from "#seed/land.server.ts";
import { pointInRing } from "#seed/retreat.ts";
import {
  buildLandIndex,
  DEFAULT_SEED,
  generateScenario,
  PLANTED_FAULTS,
  PLANTED_SHARES,
  SCENARIO_REGION,
  SCENARIO_SIZES,
  SECTOR_DELTA_R,
  trueDeglaciationAge,
  type LandIndex,
  type Scenario,
  type ScenarioInputs,
} from "#seed/scenario.ts";
import { mulberry32, Rng } from "#seed/random.ts";
import { loadCurve } from "./science/curve-files.ts";

let inputs: ScenarioInputs;
let intcal: PreparedCurve;
let marine: PreparedCurve;
let land: LandIndex;
let small: Scenario;
let full: Scenario;
const randomSpy = vi.spyOn(Math, "random");

beforeAll(() => {
  intcal = prepareCurve(loadCurve("intcal20"));
  marine = prepareCurve(loadCurve("marine20"));
  inputs = { land: loadLand("50m"), intcal, marine };
  land = buildLandIndex(inputs.land, SCENARIO_REGION);
  randomSpy.mockClear();
  small = generateScenario(inputs, { size: "small" });
  full = generateScenario(inputs, { size: "full" });
});

afterAll(() => randomSpy.mockRestore());

describe("seeded random source", () => {
  it("repeats its sequence for a seed and differs between seeds", () => {
    const a = mulberry32(42);
    const b = mulberry32(42);
    const c = mulberry32(43);
    const xs = Array.from({ length: 5 }, () => a());
    expect(Array.from({ length: 5 }, () => b())).toEqual(xs);
    expect(Array.from({ length: 5 }, () => c())).not.toEqual(xs);
    for (const x of xs) expect(x >= 0 && x < 1).toBe(true);
  });

  it("draws normals with the asked mean and spread", () => {
    const rng = new Rng(7);
    const n = 20000;
    let sum = 0;
    let sq = 0;
    for (let i = 0; i < n; i++) {
      const x = rng.normal(10, 2);
      sum += x;
      sq += x * x;
    }
    const mean = sum / n;
    expect(mean).toBeCloseTo(10, 1);
    expect(Math.sqrt(sq / n - mean * mean)).toBeCloseTo(2, 1);
  });
});

describe("generator", () => {
  it("never uses Math.random", () => {
    expect(randomSpy).not.toHaveBeenCalled();
  });

  it("gives identical output for the same seed and different output for another", () => {
    const again = generateScenario(inputs, { size: "small", seed: DEFAULT_SEED });
    expect(JSON.stringify(again)).toBe(JSON.stringify(small));
    const other = generateScenario(inputs, { size: "small", seed: DEFAULT_SEED + 1 });
    expect(other.determinations.map((d) => d.c14AgeYr ?? d.deGy)).not.toEqual(
      small.determinations.map((d) => d.c14AgeYr ?? d.deGy),
    );
    expect(other.sites[0].name).not.toBe(small.sites[0].name);
  });

  it("reaches the size's number of determinations within 10 %", () => {
    for (const s of [small, full]) {
      const target = SCENARIO_SIZES[s.size];
      expect(Math.abs(s.determinations.length - target)).toBeLessThanOrEqual(target * 0.1);
    }
  });

  it("keeps a truth for every determination, matching its sample", () => {
    for (const d of full.determinations) {
      const sample = full.samples[d.sampleIndex];
      expect(Number.isFinite(d.truth.trueAgeCalBp)).toBe(true);
      expect(d.truth.trueAgeCalBp).toBe(sample.trueAgeCalBp);
      expect([null, ...PLANTED_FAULTS]).toContain(d.truth.plantedFault);
      if (d.truth.plantedFault !== "wrong_delta_r") expect(d.truth.plantedFault).toBe(sample.fault);
    }
  });

  it("plants each kind of fault at its intended share", () => {
    for (const s of [small, full]) {
      const n = s.determinations.length;
      for (const fault of PLANTED_FAULTS) {
        const count = s.determinations.filter((d) => d.truth.plantedFault === fault).length;
        const tolerance = s === full ? 0.1 : 0.25;
        expect(Math.abs(count / n - PLANTED_SHARES[fault]), `${s.size} ${fault}`).toBeLessThanOrEqual(
          PLANTED_SHARES[fault] * tolerance,
        );
      }
    }
  });

  it("plants each fault only where it can occur", () => {
    for (const d of full.determinations) {
      const sample = full.samples[d.sampleIndex];
      const site = full.sites[sample.siteIndex];
      switch (d.truth.plantedFault) {
        case "old_carbon":
          expect(sample.material).toBe("bulk sediment");
          break;
        case "reworked":
          expect(sample.material).toBe("marine shell");
          expect(d.constraintKind).toBe("minimum");
          expect(d.truth.trueAgeCalBp).toBeGreaterThanOrEqual(site.deglaciationCalBp + 4000);
          break;
        case "partial_bleaching":
          expect(d.method).toBe("luminescence");
          break;
        case "wrong_delta_r":
          expect(d.curveName).toBe("marine20");
          expect(d.deltaRCurve).not.toBe("marine20");
          break;
        default:
          if (d.curveName === "marine20") {
            expect(d.deltaRCurve).toBe("marine20");
            expect(d.deltaRYr).not.toBeNull();
          }
      }
    }
  });
});

describe("retreat history and sites", () => {
  it("has isochrones every 250 years from 14,000 to 7,000 cal BP as closed polygons", () => {
    const ages = full.isochrones.features.map((f) => f.properties.age_cal_bp);
    expect(ages[0]).toBe(14000);
    expect(ages.at(-1)).toBe(7000);
    ages.slice(1).forEach((a, i) => expect(ages[i] - a).toBe(250));
    for (const f of full.isochrones.features) {
      const ring = f.geometry.coordinates[0];
      expect(ring[0]).toEqual(ring.at(-1));
      expect(ring.length).toBeGreaterThan(50);
    }
  });

  it("places every site on land, in the region and inside the former ice cover", () => {
    const oldest = full.isochrones.features[0].geometry.coordinates[0];
    for (const s of full.sites) {
      expect(land.contains(s.longitude, s.latitude), s.name).toBe(true);
      expect(s.latitude).toBeGreaterThanOrEqual(SCENARIO_REGION.south);
      expect(s.latitude).toBeLessThanOrEqual(SCENARIO_REGION.north);
      expect(s.longitude).toBeGreaterThanOrEqual(SCENARIO_REGION.west);
      expect(s.longitude).toBeLessThanOrEqual(SCENARIO_REGION.east);
      expect(pointInRing(s.longitude, s.latitude, oldest)).toBe(true);
      const age = trueDeglaciationAge(full, s.longitude, s.latitude);
      expect(age).not.toBeNull();
      expect(Math.abs(age! - s.deglaciationCalBp)).toBeLessThan(2);
    }
  });

  it("agrees with the isochrones: a site is under the ice of every margin older than its deglaciation", () => {
    let compared = 0;
    for (const s of full.sites) {
      for (const f of full.isochrones.features) {
        const age = f.properties.age_cal_bp;
        if (Math.abs(age - s.deglaciationCalBp) < 20) continue;
        expect(pointInRing(s.longitude, s.latitude, f.geometry.coordinates[0])).toBe(s.deglaciationCalBp < age);
        compared++;
      }
    }
    expect(compared).toBeGreaterThan(full.sites.length * 20);
  });

  it("returns null outside the former ice cover", () => {
    expect(trueDeglaciationAge(full, -20, 40)).toBeNull();
  });

  it("gives sites invented, unique names", () => {
    const names = full.sites.map((s) => s.name);
    expect(new Set(names).size).toBe(names.length);
    for (const n of names) expect(n).not.toMatch(/nain|hebron|okak|saglek|torngat|ungava|kuujj/i);
  });
});

describe("simulated determinations", () => {
  it("dates minimum-limiting material 0–800 years after the site's deglaciation and maximum-limiting material before it", () => {
    for (const d of full.determinations) {
      if (d.truth.plantedFault) continue;
      const site = full.sites[full.samples[d.sampleIndex].siteIndex];
      if (d.constraintKind === "minimum") {
        expect(d.truth.trueAgeCalBp).toBeLessThanOrEqual(site.deglaciationCalBp);
        expect(d.truth.trueAgeCalBp).toBeGreaterThanOrEqual(site.deglaciationCalBp - 800);
      } else {
        expect(d.truth.trueAgeCalBp).toBeGreaterThan(site.deglaciationCalBp);
      }
    }
  });

  it("reads radiocarbon ages off the curve at the true age, within a few σ", () => {
    let within3 = 0;
    let clean = 0;
    const oldCarbonExcess: number[] = [];
    for (const d of full.determinations) {
      if (d.method !== "radiocarbon") continue;
      const isMarine = d.curveName === "marine20";
      const at = preparedCurveAt(isMarine ? marine : intcal, d.truth.trueAgeCalBp)!;
      const sample = full.samples[d.sampleIndex];
      const site = full.sites[sample.siteIndex];
      const dr = isMarine ? SECTOR_DELTA_R[site.region] : { deltaR: 0, error: 0 };
      const sigma = Math.sqrt(d.c14ErrorYr! ** 2 + at.sigma ** 2 + dr.error ** 2) + 5;
      const residual = d.c14AgeYr! - (at.c14 + dr.deltaR);
      expect(d.c14ErrorYr!).toBeGreaterThanOrEqual(25);
      expect(d.c14ErrorYr!).toBeLessThanOrEqual(120);
      if (d.truth.plantedFault === "old_carbon") oldCarbonExcess.push(residual);
      if (d.truth.plantedFault) continue;
      clean++;
      expect(Math.abs(residual) / sigma).toBeLessThan(5);
      if (Math.abs(residual) <= 3 * sigma) within3++;
    }
    expect(clean).toBeGreaterThan(3000);
    expect(within3 / clean).toBeGreaterThan(0.98);
    expect(oldCarbonExcess.length).toBeGreaterThan(0);
    for (const r of oldCarbonExcess) expect(r).toBeGreaterThan(200);
  });

  it("gives luminescence ages consistent with the true age, and partially bleached ones too old", () => {
    const excess: number[] = [];
    for (const d of full.determinations) {
      if (d.method !== "luminescence") continue;
      expect(d.doseRateGyPerKa!).toBeGreaterThanOrEqual(1.5);
      expect(d.doseRateGyPerKa!).toBeLessThanOrEqual(3.5);
      expect(d.measurementYear!).toBeGreaterThanOrEqual(2005);
      expect(d.measurementYear!).toBeLessThanOrEqual(2024);
      const ageKa = d.deGy! / d.doseRateGyPerKa!;
      const { calBp } = luminescenceAgeToCalBp(ageKa, 0, d.measurementYear!);
      const sd = (d.deErrorGy! / d.deGy!) * calBp;
      if (d.truth.plantedFault === "partial_bleaching") {
        excess.push(calBp - d.truth.trueAgeCalBp);
      } else {
        expect(Math.abs(calBp - d.truth.trueAgeCalBp) / sd).toBeLessThan(5);
      }
    }
    excess.sort((a, b) => a - b);
    expect(excess.length).toBeGreaterThan(100);
    expect(excess[Math.floor(excess.length / 2)]).toBeGreaterThan(1500);
    expect(excess.filter((x) => x > 0).length / excess.length).toBeGreaterThan(0.9);
  });

  it("computes dose rates from K, U, Th and water with the registry's formula where components are given", () => {
    const withComponents = full.determinations.filter((d) => d.kPercent !== null);
    expect(withComponents.length).toBeGreaterThan(100);
    for (const d of withComponents) {
      const site = full.sites[full.samples[d.sampleIndex].siteIndex];
      const r = doseRateFromFields({
        signal: d.signal,
        mineral: d.mineral,
        kPercent: d.kPercent,
        uPpm: d.uPpm,
        thPpm: d.thPpm,
        waterContentFraction: d.waterContentFraction,
        grainSizeUm: d.grainSizeUm,
        burialDepthM: d.burialDepthM,
        densityGPerCm3: d.densityGPerCm3,
        conversionFactors: d.conversionFactors,
        site: { latitude: site.latitude, longitude: site.longitude, elevationM: site.elevationM },
      });
      expect(r?.ok).toBe(true);
      if (!r?.ok) continue;
      expect(r.result.total).toBeCloseTo(d.doseRateGyPerKa!, 9);
      expect(r.result.totalError).toBeCloseTo(d.doseRateErrorGyPerKa!, 9);
      // Every input's error propagated: a field sample's dose rate is not known to better than ~3 %.
      expect(d.doseRateErrorGyPerKa! / d.doseRateGyPerKa!).toBeGreaterThan(0.03);
    }
  });

  it("includes replicate determinations on one sample", () => {
    const perSample = new Map<number, number>();
    for (const d of full.determinations) perSample.set(d.sampleIndex, (perSample.get(d.sampleIndex) ?? 0) + 1);
    expect([...perSample.values()].filter((n) => n > 1).length).toBeGreaterThan(100);
  });
});

describe("provenance and review state", () => {
  it("uses unique lab codes with the invented labs' prefixes", () => {
    // Unique regardless of case, as the registry's index on lower(lab_code) demands (else the seed would fail).
    const codes = full.determinations.map((d) => d.labCode.toLowerCase());
    expect(new Set(codes).size).toBe(codes.length);
    for (const d of full.determinations) expect(d.labCode.startsWith(`${full.labs[d.labIndex].codePrefix}-`)).toBe(true);
    for (const lab of full.labs) expect(lab.codePrefix).toMatch(/^[A-Z]{2}[XZ]$/);
  });

  it("cites only fictional publications with the 10.99999 DOI prefix", () => {
    for (const p of full.publications) {
      expect(p.doi.startsWith("10.99999/")).toBe(true);
      expect(p.citation).toContain("Journal of Imaginary Glacial Studies");
    }
  });

  it("cites papers whose titles say what the citing dates report, from the sites' own region", () => {
    let checked = 0;
    for (const d of full.determinations) {
      if (d.publicationIndex === null) continue;
      const p = full.publications[d.publicationIndex];
      const sample = full.samples[d.sampleIndex];
      const site = full.sites[sample.siteIndex];
      expect(p.citation).toContain(`the ${site.region} (synthetic)`);
      if (d.method === "radiocarbon") expect(p.citation, d.labCode).not.toMatch(/Luminescence ages/);
      else expect(p.citation, d.labCode).toMatch(/[Ll]uminescence/);
      if (["marine shell", "foraminifera", "whale bone"].includes(sample.material)) {
        expect(p.citation, d.labCode).not.toMatch(/lake, bog and terrestrial/);
      } else {
        expect(p.citation, d.labCode).not.toMatch(/Marine radiocarbon ages/);
      }
      checked++;
    }
    expect(checked).toBeGreaterThan(full.determinations.length / 2);
    // The titles differ with what papers report.
    expect(new Set(full.publications.map((p) => p.citation.split(") ")[1].split(" of ")[0])).size).toBeGreaterThan(2);
  });

  it("spreads the demo over several contributors; the sign-in account submitted a believable share", () => {
    const perContributor = new Array<number>(full.contributors.length).fill(0);
    for (const d of full.determinations) perContributor[full.sites[full.samples[d.sampleIndex].siteIndex].contributorIndex]++;
    const demo = full.contributors.findIndex((c) => c.email === "contributor@example.org");
    expect(demo).toBeGreaterThanOrEqual(0);
    const share = perContributor[demo] / full.determinations.length;
    expect(share).toBeGreaterThan(0.03);
    expect(share).toBeLessThan(0.15);
    expect(perContributor.filter((n) => n > 0).length).toBe(full.contributors.length);
    expect(Math.max(...perContributor) / full.determinations.length).toBeLessThan(0.3);
    for (const c of full.contributors) expect(c.email.endsWith("@example.org")).toBe(true);
    // First authors are contributors who submitted the paper's dates.
    for (const [pi, p] of full.publications.entries()) {
      const leads = full.determinations
        .filter((d) => d.publicationIndex === pi)
        .map((d) => full.contributors[full.sites[full.samples[d.sampleIndex].siteIndex].contributorIndex].surname);
      if (leads.some((x) => x !== null)) expect(leads).toContain(p.citation.split(",")[0]);
    }
  });

  it("has most dates awaiting review and graded ones in line with the planted faults, though not all", () => {
    const graded = full.determinations.filter((d) => d.status === "graded");
    const waiting = full.determinations.filter((d) => d.status !== "graded");
    expect(waiting.length).toBeGreaterThan(graded.length);
    expect(graded.length).toBeGreaterThan(0);
    for (const d of graded) expect(d.review?.grade).toBe(d.grade);
    for (const d of waiting) expect(d.review).toBeNull();
    const faulty = graded.filter((d) => d.truth.plantedFault);
    const caught = faulty.filter((d) => d.grade! <= 1 && d.review!.flags.length > 0);
    expect(caught.length / faulty.length).toBeGreaterThan(0.6);
    expect(caught.length).toBeLessThan(faulty.length);
    const cleanGraded = graded.filter((d) => !d.truth.plantedFault);
    expect(cleanGraded.filter((d) => d.grade! >= 2).length / cleanGraded.length).toBeGreaterThan(0.9);
  });

  it("builds model runs: one on the true history and others biased early and late", () => {
    const truthRun = full.modelRuns.find((r) => r.biasYears === 0);
    expect(truthRun?.margins).toEqual(full.isochrones);
    expect(full.modelRuns.some((r) => r.biasYears > 0)).toBe(true);
    expect(full.modelRuns.some((r) => r.biasYears < 0)).toBe(true);
    const early = full.modelRuns.find((r) => r.biasYears > 0)!;
    // An early run has less ice at the same age: a site still under ice at 10,000 cal BP, but
    // freed within the bias after it, is already free of ice in the run's 10,000 slice.
    const slice = early.margins.features.find((f) => f.properties.age_cal_bp === 10000)!;
    const truthSlice = full.isochrones.features.find((f) => f.properties.age_cal_bp === 10000)!;
    const site = full.sites.find((s) => s.deglaciationCalBp < 10000 && s.deglaciationCalBp > 10050 - early.biasYears);
    expect(site).toBeDefined();
    expect(pointInRing(site!.longitude, site!.latitude, truthSlice.geometry.coordinates[0])).toBe(true);
    expect(pointInRing(site!.longitude, site!.latitude, slice.geometry.coordinates[0])).toBe(false);
  });
});

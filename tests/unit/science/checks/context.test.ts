// Checks that compare a determination with others: replicates, stratigraphic order,
// neighbours, the margin reconstruction.
import { describe, expect, it } from "vitest";
import fc from "fast-check";
import { checkReplicates, replicateGroups } from "#app/science/checks/replicates.ts";
import { checkStratigraphy, siteInversions } from "#app/science/checks/stratigraphy.ts";
import { buildNeighbourIndex, checkNeighbours, robustOutlier } from "#app/science/checks/neighbours.ts";
import {
  checkReconstruction,
  localDeglaciation,
  makeReconstruction,
  normalCdf,
  probabilityUnderIce,
} from "#app/science/checks/reconstruction.ts";
import { olderThan } from "#app/science/checks/older.ts";
import { probabilityOlder } from "#app/science/consistency.ts";
import { normalDensity } from "#app/science/density.ts";
import { runChecks } from "#app/science/checks/run.ts";
import type { CheckItem } from "#app/science/checks/types.ts";
import { expectQuoted } from "../check.ts";
import { calendarOf, item } from "./item.ts";

describe("replicates (Ward & Wilson 1978, from memory; CHECK_VALUES A7)", () => {
  const pair = (a: number, b: number, error = 30) => {
    const x = item({ sampleId: 500, c14AgeYr: a, c14ErrorYr: error });
    const y = item({ sampleId: 500, c14AgeYr: b, c14ErrorYr: error });
    const groups = replicateGroups([x, y]);
    return checkReplicates(x, groups.get(x.id));
  };

  it("passes 1000 ± 30 and 1060 ± 30: T = 2 below 3.84", () => {
    // [derived] pooled 1030 ± 21.2, T = (30² + 30²)/30² = 2
    const r = pair(1000, 1060);
    expect(r.severity).toBe("pass");
    expectQuoted(r.details.t as number, 2, 6);
    expectQuoted(r.details.pooledError as number, 21.2, 1);
    expectQuoted(r.details.critical as number, 3.84, 2); // standard χ² table
  });

  it("warns on 1000 ± 30 and 1100 ± 30: T = 5.56", () => {
    // [derived] T = 2 · 50²/30² = 5.556 > 3.84, below the 0.001 value 10.83 (χ² table)
    const r = pair(1000, 1100);
    expect(r.severity).toBe("warning");
    expectQuoted(r.details.t as number, 5.556, 3);
    expect(r.message).toContain("1,050 ± 21");
  });

  it("calls 1000 ± 30 and 1200 ± 30 a conflict: T = 22.2", () => {
    expect(pair(1000, 1200).severity).toBe("conflict");
  });

  it("pools only one reservoir and only usable values", () => {
    const a = item({ sampleId: 600, c14AgeYr: 9000, curveName: "marine20", deltaRYr: 15, deltaRErrorYr: 45 });
    const b = item({ sampleId: 600, c14AgeYr: 9500, curveName: "intcal20" });
    const c = item({ sampleId: 600, c14AgeYr: 9000, isLimit: true });
    expect(replicateGroups([a, b, c]).size).toBe(0);
    expect(checkReplicates(a, undefined).severity).toBe("pass");
  });

  it("tests luminescence replicates in ka", () => {
    // 20.0 ± 1.28 ka and 30.0 ± 1.92 ka: T = 18.8 ≫ 10.83 [derived]
    const lum = (de: number) =>
      item({
        sampleId: 700,
        method: "luminescence",
        deGy: de,
        deErrorGy: de * 0.05,
        doseRateGyPerKa: 2.5,
        doseRateErrorGyPerKa: 0.1,
        measurementYear: 1950,
      });
    const a = lum(50);
    const b = lum(75);
    const r = checkReplicates(a, replicateGroups([a, b]).get(a.id));
    expect(r.details.unit).toBe("ka");
    expect(r.severity).toBe("conflict");
  });
});

describe("stratigraphic order", () => {
  const column = (shallow: [number, number], deep: [number, number], units: [number, number] = [1, 2]) => {
    const s = item({ siteId: 900, stratOrder: units[0], depthCm: 50, age: shallow });
    const d = item({ siteId: 900, stratOrder: units[1], depthCm: 150, age: deep });
    const inv = siteInversions([s, d]);
    return { s: checkStratigraphy(s, inv), d: checkStratigraphy(d, inv) };
  };

  it("passes a deeper date that is older", () => {
    // P(deeper younger) for N(10000,100) over N(10100,100) = Φ(−100/141.42) = 0.2398 [derived]
    const r = column([10000, 100], [10100, 100]);
    expect(r.d.severity).toBe("pass");
    expectQuoted(r.d.details.worstP as number, 0.2398, 3);
  });

  it("warns at P ≥ 0.5 and calls P ≥ 0.95 a conflict", () => {
    // Φ(100/141.42) = 0.7602 [derived]
    const w = column([10000, 100], [9900, 100]);
    expect(w.d.severity).toBe("warning");
    expectQuoted(w.d.details.worstP as number, 0.7602, 3);
    expect(column([10000, 100], [9000, 100]).s.severity).toBe("conflict");
  });

  it("steps down one level within a single unit", () => {
    expect(column([10000, 100], [9900, 100], [2, 2]).d.severity).toBe("note");
    expect(column([10000, 100], [9000, 100], [2, 2]).d.severity).toBe("warning");
  });

  it("points at the level that is out of order with more others", () => {
    const top = item({ siteId: 901, stratOrder: 1, age: [9000, 80] });
    const mid = item({ siteId: 901, stratOrder: 2, age: [8000, 80] }); // younger than the level above it
    const low = item({ siteId: 901, stratOrder: 3, age: [9500, 80] });
    const lowest = item({ siteId: 901, stratOrder: 4, age: [9800, 80] });
    const inv = siteInversions([top, mid, low, lowest]);
    expect(checkStratigraphy(mid, inv).severity).toBe("conflict");
    expect(checkStratigraphy(top, inv).severity).toBe("conflict");
    expect(checkStratigraphy(low, inv).severity).toBe("pass");
  });

  it("the fast pair probability equals the plain one", () => {
    fc.assert(
      fc.property(
        fc.integer({ min: 5000, max: 15000 }),
        fc.integer({ min: -800, max: 800 }),
        fc.integer({ min: 20, max: 600 }),
        (m, d, sd) => {
          const a = normalDensity(m, sd);
          const b = normalDensity(m + d, sd * 1.5);
          expect(olderThan(a, b)).toBeCloseTo(probabilityOlder(a, b), 9);
        },
      ),
      { numRuns: 40 },
    );
    // Partly overlapping and disjoint grids (a wholly older or wholly younger than b).
    fc.assert(
      fc.property(
        fc.integer({ min: 5000, max: 15000 }),
        fc.integer({ min: -6000, max: 6000 }),
        fc.integer({ min: 20, max: 600 }),
        fc.integer({ min: 20, max: 900 }),
        (m, d, sa, sb) => {
          const a = normalDensity(m, sa);
          const b = normalDensity(m + d, sb);
          expect(olderThan(a, b)).toBeCloseTo(probabilityOlder(a, b), 9);
        },
      ),
      { numRuns: 60 },
    );
  });
});

describe("neighbours", () => {
  const at = (lat: number, lon: number, over: Partial<CheckItem> & { age?: [number, number] }) =>
    item({ latitude: lat, longitude: lon, ...over });

  it("a minimum-limiting age older than a maximum-limiting one nearby is a conflict; the maximum gets a note", () => {
    const min = at(57, -65, { age: [12000, 100] });
    const max = at(57.03, -65, { constraintKind: "maximum", age: [11000, 100] }); // about 3.3 km north
    const index = buildNeighbourIndex([min, max], 25);
    const r = checkNeighbours(min, index);
    expect(r.severity).toBe("conflict");
    expect(r.details.pKindConflict as number).toBeGreaterThan(0.99);
    expect(checkNeighbours(max, index).severity).toBe("note");
  });

  it("an empty set of determinations (the last of an area withdrawn) checks nothing and does not fail", () => {
    expect(runChecks([]).size).toBe(0);
    const lone = at(57, -65, { age: [10000, 100] });
    expect(checkNeighbours(lone, buildNeighbourIndex([lone], 25)).message).toMatch(/No dated neighbour/);
  });

  it("a maximum-limiting date older than deglaciation is expected, never a conflict", () => {
    const min = at(57, -65, { age: [10000, 100] });
    const max = at(57.03, -65, { constraintKind: "maximum", age: [25000, 300] });
    const index = buildNeighbourIndex([min, max], 25);
    expect(checkNeighbours(max, index).severity).toBe("pass");
    expect(checkNeighbours(min, index).severity).toBe("pass");
  });

  it("robust z: median and MAD floored at the neighbours' own σ", () => {
    // [derived] means 100, 110, 90, 105, 95 (σ 10): median 100, MAD 5 → 7.41 < 10, so spread 10;
    // a value of 160 ± 10 gives z = 60/√200 = 4.243
    const ref = [100, 110, 90, 105, 95].map((mean) => ({ mean, sd: 10 }));
    const t = robustOutlier({ mean: 160, sd: 10 }, ref);
    expect(t.referenceMedian).toBe(100);
    expect(t.referenceSpread).toBe(10);
    expectQuoted(t.z, 4.243, 3);
  });

  it("flags a shell far older than its secure neighbours as reworked, whatever its distance in years", () => {
    const ref = [9950, 10000, 10050, 10100, 9900].map((m, i) => at(57 + i * 0.01, -65.05, { grade: 3, age: [m, 60] }));
    const shell = at(57, -65, { material: "marine shell", marineMaterial: true, age: [14000, 80] });
    const r = checkNeighbours(shell, buildNeighbourIndex([...ref, shell], 25));
    expect(r.severity).toBe("conflict");
    expect(r.suggestedFlag).toBe("reworked");
    expect(r.details.referenceBasis).toBe("secure or usable");
    const usual = at(57, -65, { age: [10080, 80] });
    expect(checkNeighbours(usual, buildNeighbourIndex([...ref, usual], 25)).severity).toBe("pass");
  });

  it("ignores neighbours beyond the radius", () => {
    const a = at(57, -65, { age: [12000, 100] });
    const far = at(57.5, -65, { constraintKind: "maximum", age: [11000, 100] }); // about 55 km
    expect(checkNeighbours(a, buildNeighbourIndex([a, far], 25)).details.neighbours).toBe(0);
  });
});

describe("reconstruction", () => {
  const square = (half: number) => ({
    type: "Polygon" as const,
    coordinates: [
      [
        [-65 - half, 57 - half],
        [-65 + half, 57 - half],
        [-65 + half, 57 + half],
        [-65 - half, 57 + half],
        [-65 - half, 57 - half],
      ],
    ],
  });
  const recon = makeReconstruction("test margins", 200, [
    { ageCalBp: 12000, geometry: square(1) },
    { ageCalBp: 11000, geometry: square(0.5) },
    { ageCalBp: 10000, geometry: square(0.1) },
  ]);
  const site = { latitude: 57.3, longitude: -65 }; // inside the 11,000 margin, outside the 10,000 one
  const local = (it: CheckItem) => localDeglaciation(recon, it.longitude, it.latitude);

  it("brackets a site's deglaciation between two isochrones", () => {
    // midpoint 10,500; σ = √(200² + (1000/√12)²) = 351.2 [derived]
    const l = localDeglaciation(recon, site.longitude, site.latitude);
    expect(l.kind).toBe("bracketed");
    if (l.kind !== "bracketed") return;
    expect(l.ageCalBp).toBe(10500);
    expectQuoted(l.sdYears, 351.2, 1);
  });

  it("normal CDF matches the table", () => {
    expectQuoted(normalCdf(1.96), 0.975, 3); // standard normal table
    expectQuoted(normalCdf(-1), 0.1587, 4);
  });

  it("a date well before the site's deglaciation is a conflict", () => {
    // P = Φ((11500 − 10500)/351.2) = Φ(2.847) = 0.9978 for a narrow date [derived]
    const it = item({ ...site, age: [11500, 20] });
    const r = checkReconstruction(it, recon, local);
    expect(r.severity).toBe("conflict");
    expectQuoted(r.details.pUnderIce as number, 0.9978, 3);
    const l = local(it);
    expect(l.kind).toBe("bracketed");
    if (l.kind === "bracketed") expectQuoted(probabilityUnderIce(it, l), 0.9978, 3);
    expect(r.message).toContain("test margins");
  });

  it("passes a date after deglaciation, and never tests a maximum-limiting date", () => {
    expect(checkReconstruction(item({ ...site, age: [9000, 50] }), recon, local).severity).toBe("pass");
    const max = item({ ...site, constraintKind: "maximum", age: [20000, 200] });
    expect(checkReconstruction(max, recon, local).severity).toBe("pass");
    expect(checkReconstruction(item({ latitude: 59, longitude: -60 }), recon, local).message).toContain("outside");
    expect(checkReconstruction(item(), null, local).severity).toBe("pass");
  });
});

describe("a whole run", () => {
  it("gives each target all seven checks", () => {
    const a = item({ age: [10000, 100] });
    const b = item({ latitude: 57.01, age: [10050, 100] });
    const out = runChecks([a, b], { targets: new Set([a.id]) });
    expect([...out.keys()]).toEqual([a.id]);
    expect(out.get(a.id)!.map((r) => r.check)).toEqual([
      "value_range",
      "marine",
      "replicates",
      "stratigraphy",
      "neighbours",
      "reconstruction",
      "duplicates",
    ]);
  });

  it("calendarOf gives the moments it was asked for", () => {
    const c = calendarOf(10000, 100);
    expect(c.meanCalBp).toBeCloseTo(10000, 0);
    expect(c.sdYears).toBeCloseTo(100, 0);
  });
});

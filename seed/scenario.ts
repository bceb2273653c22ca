// The demo scenario: a hypothetical ice cap over northern Labrador and Ungava Bay retreating
// between about 14,000 and 7,000 cal BP, with sites, samples and determinations simulated from
// the true history by running the published methods backwards, and a known share of planted
// faults. Pure and reproducible: the same seed, land geometry and curves give the same data.
// Everything here is invented and plainly fictional.

import { preparedCurveAt, type PreparedCurve } from "#app/science/curve.ts";
import { type ConversionFactorKey } from "#app/science/luminescence.ts";
import { doseRateFromFields } from "#app/science/dose-rate-fields.ts";
import type { FullDoseRate } from "#app/science/dose-rate.ts";
import { f14cFromAge } from "#app/science/radiocarbon.ts";
import { buildLandIndex, type Bounds, type LandGeometry, type LandIndex } from "./land.ts";
import { formatCitation } from "#app/utils/citation.ts";
import { authorList, initials, siteName } from "./names.ts";
import { deriveSeed, Rng } from "./random.ts";
import {
  isochrones,
  marginsWithBias,
  retreatParams,
  trueAdvanceAge,
  trueDeglaciationAge as ageFromParams,
  type IsochroneCollection,
  type RetreatParams,
} from "./retreat.ts";

export { isochrones, marginsWithBias, retreatParams, type IsochroneCollection, type RetreatParams };
export { buildLandIndex, type LandGeometry, type LandIndex };

export type ScenarioSize = "small" | "full";

/** Intended number of determinations per size (the generator lands within a few of it). */
export const SCENARIO_SIZES: Readonly<Record<ScenarioSize, number>> = { small: 300, full: 5500 };

export const DEFAULT_SEED = 20260;

/** Where sites may be placed. */
export const SCENARIO_REGION: Readonly<Bounds> = { west: -72, east: -60, south: 55.5, north: 61 };

export const PLANTED_FAULTS = ["old_carbon", "reworked", "partial_bleaching", "wrong_delta_r"] as const;
export type PlantedFault = (typeof PLANTED_FAULTS)[number];

/** Intended share of all determinations carrying each planted fault. */
export const PLANTED_SHARES: Readonly<Record<PlantedFault, number>> = {
  old_carbon: 0.04,
  reworked: 0.03,
  partial_bleaching: 0.04,
  wrong_delta_r: 0.03,
};

/** The history's ΔR (against Marine20) per coastal sector: the truth the simulated shells carry. */
export const SECTOR_DELTA_R: Readonly<Record<string, { deltaR: number; error: number }>> = {
  "Ungava Bay coast": { deltaR: -45, error: 55 },
  "Labrador Sea coast": { deltaR: 15, error: 45 },
};

/** Shift of ΔR values derived against an older marine curve, relative to Marine20 (years). */
const OLDER_CURVE_DELTA_R_SHIFT = 140;

// ---------------------------------------------------------------- output types

export interface ScenarioLab {
  name: string;
  codePrefix: string;
  city: string;
  methods: ("radiocarbon" | "luminescence")[];
  /** Typical 1σ counting error at 10 ka (radiocarbon labs), years. */
  typicalErrorYr: number;
  reportsF14c: boolean;
}

export interface ScenarioPublication {
  /** The one-line citation, written from the fields below as the registry writes it (formatCitation). */
  citation: string;
  authors: string;
  title: string;
  /** Journal with volume and pages. */
  journal: string;
  doi: string;
  year: number;
  /** The part of the demo region the paper covers: every site citing it lies there. */
  region: string;
  /** What the paper reports: only dates of this kind cite it. */
  focus: PublicationFocus;
}

export type PublicationFocus = "luminescence" | "marine radiocarbon" | "terrestrial radiocarbon";
const FOCI: readonly PublicationFocus[] = ["marine radiocarbon", "terrestrial radiocarbon", "luminescence"];

/** An invented person who submitted part of the demo (the sign-in account is one of them). */
export interface ScenarioContributor {
  email: string;
  name: string;
  /** Surname as cited in publications; null for the demo sign-in account, which writes no papers. */
  surname: string | null;
  /** Share of the demo sites this person submitted. */
  share: number;
}

export interface ScenarioSite {
  name: string;
  latitude: number;
  longitude: number;
  elevationM: number;
  locationUncertaintyM: number;
  setting: string;
  region: string;
  notes: string;
  coastal: boolean;
  /** True deglaciation age of the site, cal BP (from the retreat history). */
  deglaciationCalBp: number;
  /** When the advancing ice overrode the site (cal BP): maximum-limiting material predates it. */
  advanceCalBp: number;
  publicationIndex: number | null;
  /** Who submitted the site and everything dated at it (index into the scenario's contributors). */
  contributorIndex: number;
}

export interface ScenarioSample {
  siteIndex: number;
  fieldCode: string;
  material: string;
  depthCm: number;
  stratUnit: string;
  stratOrder: number;
  context: string;
  constraintKind: "minimum" | "maximum";
  /** True calendar age of the dated material, cal BP. */
  trueAgeCalBp: number;
  /** Sample-level planted fault (old carbon, reworking, partial bleaching), if any. */
  fault: PlantedFault | null;
}

export interface ScenarioReview {
  grade: 0 | 1 | 2 | 3;
  flags: string[];
  comment: string;
  daysAgo: number;
}

/** One determination, with field names as in the registry's determinations table. */
export interface ScenarioDetermination {
  sampleIndex: number;
  labIndex: number;
  publicationIndex: number | null;
  labCode: string;
  method: "radiocarbon" | "luminescence";
  constraintKind: "minimum" | "maximum";
  status: "submitted" | "in_review" | "graded";
  grade: number | null;
  c14AgeYr: number | null;
  c14ErrorYr: number | null;
  f14c: number | null;
  f14cError: number | null;
  d13cPermil: number | null;
  ageNormalised: boolean;
  isLimit: boolean;
  pretreatment: string | null;
  curveName: string | null;
  deltaRYr: number | null;
  deltaRErrorYr: number | null;
  deltaRCurve: string | null;
  signal: "OSL" | "pIRIR" | null;
  mineral: string | null;
  deGy: number | null;
  deErrorGy: number | null;
  doseRateGyPerKa: number | null;
  doseRateErrorGyPerKa: number | null;
  kPercent: number | null;
  uPpm: number | null;
  thPpm: number | null;
  waterContentFraction: number | null;
  grainSizeUm: number | null;
  burialDepthM: number | null;
  densityGPerCm3: number | null;
  conversionFactors: string | null;
  /** True when the dose rate was computed from the concentrations with the registry's own model. */
  doseRateComputed?: boolean;
  measurementYear: number | null;
  aliquots: number | null;
  ageModel: string | null;
  notes: string | null;
  /** Days before the seed that the determination was submitted. */
  submittedDaysAgo: number;
  review: ScenarioReview | null;
  truth: { trueAgeCalBp: number; plantedFault: PlantedFault | null };
}

export interface ScenarioModelRun {
  name: string;
  description: string;
  /** Positive: the run frees the land this many years too early; negative: too late. */
  biasYears: number;
  margins: IsochroneCollection;
}

export interface Scenario {
  seed: number;
  size: ScenarioSize;
  retreat: RetreatParams;
  isochrones: IsochroneCollection;
  labs: ScenarioLab[];
  contributors: ScenarioContributor[];
  publications: ScenarioPublication[];
  sites: ScenarioSite[];
  samples: ScenarioSample[];
  determinations: ScenarioDetermination[];
  modelRuns: ScenarioModelRun[];
}

export interface ScenarioInputs {
  /** Land polygons (e.g. world-atlas land-50m as GeoJSON); sites are placed on land only. */
  land: LandGeometry;
  intcal: PreparedCurve;
  marine: PreparedCurve;
}

export interface ScenarioOptions {
  size: ScenarioSize;
  seed?: number;
  /** Overrides the size's determination target (tests). */
  targetDeterminations?: number;
}

// ---------------------------------------------------------------- fixed cast

/** Invented labs. Prefixes follow a pattern (three letters ending in X or Z) no real lab uses. */
export const DEMO_LABS: readonly ScenarioLab[] = [
  {
    name: "Kivalo Isotope Works",
    codePrefix: "KVX",
    city: "Port Ivalen",
    methods: ["radiocarbon"],
    typicalErrorYr: 35,
    reportsF14c: true,
  },
  {
    name: "Orrin Vale Carbon Facility",
    codePrefix: "ORZ",
    city: "Orrin Vale",
    methods: ["radiocarbon"],
    typicalErrorYr: 45,
    reportsF14c: false,
  },
  {
    name: "Tallowmere Accelerator Group",
    codePrefix: "TWX",
    city: "Tallowmere",
    methods: ["radiocarbon"],
    typicalErrorYr: 30,
    reportsF14c: true,
  },
  {
    name: "Mirewood Radiocarbon Laboratory",
    codePrefix: "MWZ",
    city: "Mirewood",
    methods: ["radiocarbon"],
    typicalErrorYr: 70,
    reportsF14c: false,
  },
  {
    name: "Hollowquartz Luminescence Unit",
    codePrefix: "HQX",
    city: "Hollowby",
    methods: ["luminescence"],
    typicalErrorYr: 0,
    reportsF14c: false,
  },
  {
    name: "Pennick Ridge Dating Laboratory",
    codePrefix: "PRZ",
    city: "Pennick",
    methods: ["luminescence", "radiocarbon"],
    typicalErrorYr: 55,
    reportsF14c: false,
  },
];

export const DEMO_JOURNAL = "Journal of Imaginary Glacial Studies";

/**
 * Invented contributors (surnames made of glacial-geology words; addresses on example.org). The demo
 * sign-in account submitted a modest share, as one member of a community would.
 */
export const DEMO_CONTRIBUTORS: readonly ScenarioContributor[] = [
  { email: "contributor@example.org", name: "Demo Contributor", surname: null, share: 0.07 },
  { email: "ingrid.frostmere@example.org", name: "Ingrid Frostmere", surname: "Frostmere", share: 0.16 },
  { email: "tomas.kettleby@example.org", name: "Tomas Kettleby", surname: "Kettleby", share: 0.14 },
  { email: "ada.eskerholm@example.org", name: "Ada Eskerholm", surname: "Eskerholm", share: 0.13 },
  { email: "noor.drumlinson@example.org", name: "Noor Drumlinson", surname: "Drumlinson", share: 0.12 },
  { email: "pavel.cirqueton@example.org", name: "Pavel Cirqueton", surname: "Cirqueton", share: 0.11 },
  { email: "mina.varvebridge@example.org", name: "Mina Varvebridge", surname: "Varvebridge", share: 0.1 },
  { email: "owen.tillworth@example.org", name: "Owen Tillworth", surname: "Tillworth", share: 0.09 },
  { email: "sela.rimebrook@example.org", name: "Sela Rimebrook", surname: "Rimebrook", share: 0.08 },
];

/** Regions of the demo, as regionOf names them; each publication covers one. */
const REGIONS = ["Labrador Sea coast", "Ungava Bay coast", "northern interior", "southern plateau"] as const;

// ---------------------------------------------------------------- site settings

type UnitKind = "min" | "max" | "till";
type MaterialChoice = readonly (readonly [string, number])[];

interface UnitSpec {
  name: string;
  kind: UnitKind;
  /** Minimum units: lag after deglaciation, years. Maximum units: age before deglaciation, years. */
  years: readonly [number, number];
  thicknessCm: readonly [number, number];
  materials: MaterialChoice;
  context: string;
}

interface SettingSpec {
  name: string;
  coastal: boolean;
  weight: number;
  features: readonly string[];
  units: readonly UnitSpec[];
}

const TILL = (thickness: readonly [number, number] = [80, 300]): UnitSpec => ({
  name: "till",
  kind: "till",
  years: [0, 0],
  thicknessCm: thickness,
  materials: [],
  context: "diamicton, massive, matrix-supported",
});

const SUB_TILL_MARINE: UnitSpec = {
  name: "sub-till marine sand",
  kind: "max",
  // years before the advancing ice overrode the site
  years: [20, 600],
  thicknessCm: [60, 200],
  materials: [
    ["marine shell", 3],
    ["quartz", 1],
  ],
  context: "shells and sand beneath till, overridden by the advancing ice",
};

const BURIED_ORGANICS: UnitSpec = {
  name: "buried organic bed",
  kind: "max",
  years: [20, 800],
  thicknessCm: [20, 80],
  materials: [
    ["wood", 2],
    ["plant macrofossil", 2],
    ["peat", 1],
  ],
  context: "compressed organic bed beneath till",
};

const SETTINGS: readonly SettingSpec[] = [
  {
    name: "raised marine delta",
    coastal: true,
    weight: 0.35,
    features: ["Delta", "Terraces", "Flats"],
    units: [
      {
        name: "topset sand",
        kind: "min",
        years: [450, 800],
        thicknessCm: [120, 300],
        materials: [
          ["quartz", 3],
          ["K-feldspar", 1.5],
          ["marine shell", 1],
        ],
        context: "horizontally bedded sand and gravel, delta topset",
      },
      {
        name: "foreset sand",
        kind: "min",
        years: [150, 450],
        thicknessCm: [150, 400],
        materials: [
          ["marine shell", 3],
          ["quartz", 2],
          ["K-feldspar", 1],
        ],
        context: "inclined sand beds, delta foreset",
      },
      {
        name: "prodelta mud",
        kind: "min",
        years: [0, 150],
        thicknessCm: [100, 300],
        materials: [
          ["marine shell", 3],
          ["foraminifera", 1.5],
        ],
        context: "laminated mud with paired valves",
      },
      TILL(),
      SUB_TILL_MARINE,
    ],
  },
  {
    name: "raised beach",
    coastal: true,
    weight: 0.25,
    features: ["Strand", "Beach Ridges", "Cove"],
    units: [
      {
        name: "beach gravel",
        kind: "min",
        years: [300, 800],
        thicknessCm: [80, 200],
        materials: [
          ["marine shell", 3],
          ["quartz", 1.5],
          ["whale bone", 0.2],
        ],
        context: "rounded gravel and sand, raised beach ridge",
      },
      {
        name: "glaciomarine silt",
        kind: "min",
        years: [0, 300],
        thicknessCm: [100, 300],
        materials: [
          ["marine shell", 3],
          ["foraminifera", 1],
        ],
        context: "massive silt with dropstones",
      },
      TILL(),
    ],
  },
  {
    name: "glaciomarine section",
    coastal: true,
    weight: 0.4,
    features: ["Bluff", "Cutbank", "Section"],
    units: [
      {
        name: "littoral sand",
        kind: "min",
        years: [350, 800],
        thicknessCm: [100, 250],
        materials: [
          ["marine shell", 2],
          ["quartz", 1.5],
          ["K-feldspar", 1],
        ],
        context: "regressive shoreface sand",
      },
      {
        name: "glaciomarine silt",
        kind: "min",
        years: [0, 350],
        thicknessCm: [150, 500],
        materials: [
          ["marine shell", 3],
          ["foraminifera", 2],
        ],
        context: "shells in growth position in silt",
      },
      TILL(),
      SUB_TILL_MARINE,
    ],
  },
  {
    name: "lake basin",
    coastal: false,
    weight: 0.38,
    features: ["Lake", "Pond", "Tarn"],
    units: [
      {
        name: "gyttja",
        kind: "min",
        years: [400, 800],
        thicknessCm: [100, 400],
        materials: [
          ["gyttja", 2],
          ["plant macrofossil", 2],
          ["bulk sediment", 1.5],
          ["moss", 1],
        ],
        context: "lake core, organic mud",
      },
      {
        name: "basal organic silt",
        kind: "min",
        years: [0, 400],
        thicknessCm: [20, 80],
        materials: [
          ["plant macrofossil", 2.5],
          ["bulk sediment", 2],
          ["moss", 1],
          ["gyttja", 1],
        ],
        context: "lake core, first organic sediment above minerogenic silt",
      },
      TILL([50, 150]),
    ],
  },
  {
    name: "bog",
    coastal: false,
    weight: 0.24,
    features: ["Bog", "Fen", "Mire"],
    units: [
      {
        name: "peat",
        kind: "min",
        years: [400, 800],
        thicknessCm: [80, 300],
        materials: [
          ["peat", 2],
          ["plant macrofossil", 1.5],
          ["wood", 1],
        ],
        context: "sedge peat",
      },
      {
        name: "basal peat",
        kind: "min",
        years: [0, 400],
        thicknessCm: [10, 40],
        materials: [
          ["plant macrofossil", 2],
          ["bulk sediment", 2],
          ["peat", 1],
          ["wood", 1],
        ],
        context: "basal peat on mineral soil",
      },
      TILL([50, 200]),
      BURIED_ORGANICS,
    ],
  },
  {
    name: "outwash terrace",
    coastal: false,
    weight: 0.16,
    features: ["Terrace", "Outwash", "Brook"],
    units: [
      {
        name: "outwash sand",
        kind: "min",
        years: [0, 600],
        thicknessCm: [150, 400],
        materials: [
          ["quartz", 3],
          ["K-feldspar", 1.5],
          ["wood", 0.5],
          ["charcoal", 0.3],
        ],
        context: "cross-bedded proglacial sand",
      },
      TILL(),
      {
        name: "sub-till sand",
        kind: "max",
        years: [3000, 30000],
        thicknessCm: [80, 200],
        materials: [
          ["quartz", 2],
          ["wood", 1],
        ],
        context: "sand beneath till",
      },
    ],
  },
  {
    name: "aeolian dune field",
    coastal: false,
    weight: 0.08,
    features: ["Dunes", "Sandhills"],
    units: [
      {
        name: "dune sand",
        kind: "min",
        years: [300, 800],
        thicknessCm: [150, 300],
        materials: [
          ["quartz", 2],
          ["K-feldspar", 1],
        ],
        context: "well-sorted aeolian sand",
      },
      {
        name: "outwash sand",
        kind: "min",
        years: [0, 300],
        thicknessCm: [100, 250],
        materials: [
          ["quartz", 2],
          ["K-feldspar", 1],
        ],
        context: "proglacial sand beneath dune",
      },
    ],
  },
  {
    name: "moraine section",
    coastal: false,
    weight: 0.14,
    features: ["Moraine", "Ridge", "Kame"],
    units: [
      {
        name: "slopewash",
        kind: "min",
        years: [300, 800],
        thicknessCm: [40, 150],
        materials: [
          ["plant macrofossil", 2],
          ["charcoal", 1],
          ["quartz", 1],
        ],
        context: "colluvium on the moraine crest",
      },
      TILL([150, 400]),
      BURIED_ORGANICS,
    ],
  },
];

const INLAND_ACCEPTANCE = 0.4;

const MARINE_MATERIALS = new Set(["marine shell", "foraminifera", "whale bone"]);
const LUMINESCENCE_MATERIALS = new Set(["quartz", "K-feldspar"]);

const D13C: Readonly<Record<string, readonly [number, number]>> = {
  "marine shell": [1.0, 1.0],
  foraminifera: [0.6, 0.6],
  "whale bone": [-14.5, 1.0],
  "plant macrofossil": [-26.8, 1.5],
  wood: [-25.3, 1.0],
  peat: [-27.2, 1.2],
  gyttja: [-27.8, 1.8],
  "bulk sediment": [-24.6, 2.0],
  moss: [-29.0, 1.5],
  charcoal: [-25.0, 1.0],
};

const PRETREATMENT: Readonly<Record<string, string>> = {
  "marine shell": "acid etch, 20 % removed",
  foraminifera: "acid leach",
  "whale bone": "collagen extraction",
  "plant macrofossil": "acid–base–acid",
  wood: "acid–base–acid",
  peat: "acid–base–acid, humin fraction",
  gyttja: "acid wash",
  "bulk sediment": "acid wash",
  moss: "acid–base–acid",
  charcoal: "acid–base–acid",
};

// ---------------------------------------------------------------- helpers

const round = (x: number, digits = 0) => {
  const f = 10 ** digits;
  return Math.round(x * f) / f;
};

/** Conventional ages are quoted to the nearest 5 or 10 years, errors to the nearest 5 (at least 25). */
function quoteAge(age: number, error: number): { age: number; error: number } {
  const step = error >= 50 ? 10 : 5;
  return { age: Math.round(age / step) * step, error: Math.max(25, Math.min(120, Math.round(error / 5) * 5)) };
}

function coastalSector(lon: number, lat: number): string {
  return lon < -64.3 && lat > 57.6 ? "Ungava Bay coast" : "Labrador Sea coast";
}

function regionOf(lon: number, lat: number, coastal: boolean): string {
  if (coastal) return coastalSector(lon, lat);
  return lat > 58.3 ? "northern interior" : "southern plateau";
}

/** Coastal when open water lies within about 15 km in any of eight directions. */
function isCoastal(land: LandIndex, lon: number, lat: number): boolean {
  const kmLon = 111.32 * Math.cos((lat * Math.PI) / 180);
  for (const km of [5, 15]) {
    for (let i = 0; i < 8; i++) {
      const a = (i * Math.PI) / 4;
      if (!land.contains(lon + (km * Math.cos(a)) / kmLon, lat + (km * Math.sin(a)) / 110.574)) return true;
    }
  }
  return false;
}

// ---------------------------------------------------------------- generator

interface PlannedSample extends ScenarioSample {
  unit: UnitSpec;
  detCount: number;
  oldCarbonYr: number;
  bleachingResidualKa: number;
  /** Depth of the middle of the site's till, where reworked shells are put (null without till). */
  tillDepthCm: number | null;
  /** The sample's 14C age before counting error (curve scatter and reservoir included), once drawn. */
  sampleC14?: number;
}

/** The true deglaciation age (cal BP) of a point in a scenario, or null outside the former ice cover. */
export function trueDeglaciationAge(scenario: Pick<Scenario, "retreat">, lon: number, lat: number): number | null {
  return ageFromParams(scenario.retreat, lon, lat);
}

export function generateScenario(inputs: ScenarioInputs, options: ScenarioOptions): Scenario {
  const seed = options.seed ?? DEFAULT_SEED;
  const target = options.targetDeterminations ?? SCENARIO_SIZES[options.size];
  const retreat = retreatParams(seed);
  const pad = 0.5;
  const land = buildLandIndex(inputs.land, {
    west: SCENARIO_REGION.west - pad,
    east: SCENARIO_REGION.east + pad,
    south: SCENARIO_REGION.south - pad,
    north: SCENARIO_REGION.north + pad,
  });

  const rng = new Rng(deriveSeed(seed, "sites"));
  const publications = makePublications(new Rng(deriveSeed(seed, "publications")), Math.max(12, Math.round(target / 130)));
  const contributorRng = new Rng(deriveSeed(seed, "contributors"));
  const contributorWeights = DEMO_CONTRIBUTORS.map((c, i) => [i, c.share] as const);

  // 1. Sites and planned samples, until the planned determinations reach the target.
  const sites: ScenarioSite[] = [];
  const samples: PlannedSample[] = [];
  const takenNames = new Set<string>();
  let planned = 0;
  let attempts = 0;
  while (planned < target) {
    if (++attempts > target * 200) throw new Error("Could not place enough demo sites on land inside the ice cover.");
    const lon = rng.uniform(SCENARIO_REGION.west, SCENARIO_REGION.east);
    const lat = rng.uniform(SCENARIO_REGION.south, SCENARIO_REGION.north);
    if (!land.contains(lon, lat)) continue;
    const deglaciation = ageFromParams(retreat, lon, lat);
    if (deglaciation === null || deglaciation < 7300) continue;
    const coastal = isCoastal(land, lon, lat);
    // Deglacial dates cluster on the coast (raised marine deposits); thin out the interior.
    if (!coastal && !rng.chance(INLAND_ACCEPTANCE)) continue;
    const setting = rng.weighted(SETTINGS.filter((s) => s.coastal === coastal).map((s) => [s, s.weight] as const));
    const name = siteName(rng, setting.features, takenNames);
    const marineLimit = 35 + (110 * (deglaciation - 7000)) / 7000;
    const site: ScenarioSite = {
      name,
      latitude: round(lat, 5),
      longitude: round(lon, 5),
      elevationM: round(coastal ? marineLimit * rng.uniform(0.12, 0.95) : rng.uniform(160, 820), 1),
      locationUncertaintyM: rng.weighted([
        [10, 3],
        [25, 3],
        [50, 2],
        [100, 2],
        [250, 1],
        [1000, 0.5],
      ] as const),
      setting: setting.name,
      region: regionOf(lon, lat, coastal),
      notes: "Synthetic demo site: invented for the Thawline demo scenario, not a real place.",
      coastal,
      deglaciationCalBp: deglaciation,
      advanceCalBp: trueAdvanceAge(retreat, lon, lat) ?? retreat.startCalBp,
      publicationIndex: rng.chance(0.8) ? rng.int(0, publications.length - 1) : null,
      contributorIndex: contributorRng.weighted(contributorWeights),
    };
    const siteIndex = sites.push(site) - 1;
    const siteSamples = planSamples(rng, site, siteIndex, setting);
    for (const s of siteSamples) {
      samples.push(s);
      planned += s.detCount;
    }
  }

  // 2. Planted faults, by quota over determinations.
  const totalDets = samples.reduce((n, s) => n + s.detCount, 0);
  const faultRng = new Rng(deriveSeed(seed, "faults"));
  const quota = (f: PlantedFault) => Math.round(PLANTED_SHARES[f] * totalDets);
  const clean = (s: PlannedSample) => s.fault === null && s.constraintKind === "minimum";

  fillQuota(
    faultRng,
    samples,
    quota("reworked"),
    (s) => clean(s) && s.material === "marine shell",
    (s) => {
      const site = sites[s.siteIndex];
      s.fault = "reworked";
      s.trueAgeCalBp = Math.min(40000, site.deglaciationCalBp + faultRng.uniform(4000, 26000));
      if (faultRng.chance(0.5)) {
        const setting = SETTINGS.find((x) => x.name === site.setting)!;
        const till = setting.units.findIndex((u) => u.kind === "till");
        s.stratUnit = "till";
        s.stratOrder = till + 1;
        if (s.tillDepthCm !== null) s.depthCm = s.tillDepthCm;
        s.context = "shell fragments in diamicton";
      }
    },
  );
  fillQuota(
    faultRng,
    samples,
    quota("old_carbon"),
    (s) => clean(s) && s.material === "bulk sediment",
    (s) => {
      s.fault = "old_carbon";
      s.oldCarbonYr = faultRng.uniform(500, 3000);
    },
  );
  fillQuota(
    faultRng,
    samples,
    quota("partial_bleaching"),
    (s) => clean(s) && LUMINESCENCE_MATERIALS.has(s.material),
    (s) => {
      s.fault = "partial_bleaching";
      s.bleachingResidualKa = faultRng.uniform(1, 5);
    },
  );

  // 3. Determinations simulated from the samples' true ages.
  const simRng = new Rng(deriveSeed(seed, "measurements"));
  const nextNumber = DEMO_LABS.map((_, i) => 1000 + 7000 * i + simRng.int(0, 900));
  const radiocarbonLabs = DEMO_LABS.flatMap((l, i) => (l.methods.includes("radiocarbon") ? [i] : []));
  const luminescenceLabs = DEMO_LABS.flatMap((l, i) => (l.methods.includes("luminescence") ? [i] : []));
  const determinations: ScenarioDetermination[] = [];
  samples.forEach((s, sampleIndex) => {
    const site = sites[s.siteIndex];
    const lum = LUMINESCENCE_MATERIALS.has(s.material);
    for (let r = 0; r < s.detCount; r++) {
      const labIndex = simRng.pick(lum ? luminescenceLabs : radiocarbonLabs);
      nextNumber[labIndex] += simRng.int(1, 9);
      const cited = citedPublication(
        publications,
        site,
        lum ? "luminescence" : MARINE_MATERIALS.has(s.material) ? "marine radiocarbon" : "terrestrial radiocarbon",
      );
      const base = blankDetermination(sampleIndex, labIndex, cited, s);
      base.labCode = `${DEMO_LABS[labIndex].codePrefix}-${nextNumber[labIndex]}`;
      base.submittedDaysAgo = simRng.int(1, 900);
      if (lum) simulateLuminescence(simRng, base, s, site);
      else simulateRadiocarbon(simRng, base, s, site, DEMO_LABS[labIndex], inputs);
      determinations.push(base);
    }
  });

  // Wrong ΔR is a reporting fault, so it is planted per determination, after the measurement.
  const wrongDeltaR = faultRng.shuffle(
    determinations.filter((d) => d.truth.plantedFault === null && d.curveName === "marine20" && d.constraintKind === "minimum"),
  );
  for (const d of wrongDeltaR.slice(0, quota("wrong_delta_r"))) {
    d.truth.plantedFault = "wrong_delta_r";
    const variant = faultRng.weighted([
      ["older-curve", 0.45],
      ["no-curve", 0.3],
      ["none", 0.25],
    ] as const);
    if (variant === "none") {
      d.deltaRYr = null;
      d.deltaRErrorYr = null;
      d.deltaRCurve = null;
    } else {
      d.deltaRYr = (d.deltaRYr ?? 0) + OLDER_CURVE_DELTA_R_SHIFT + Math.round(faultRng.normal(0, 15));
      d.deltaRCurve = variant === "older-curve" ? faultRng.pick(["marine13", "marine09"]) : null;
    }
  }

  // 4. Review state: most dates wait in the queue; a quarter are graded, mostly in line with the truth.
  const reviewRng = new Rng(deriveSeed(seed, "reviews"));
  for (const d of determinations) {
    const u = reviewRng.random();
    d.status = u < 0.45 ? "submitted" : u < 0.75 ? "in_review" : "graded";
    if (d.status === "graded") {
      d.review = reviewFor(reviewRng, d, samples[d.sampleIndex]);
      d.grade = d.review.grade;
    }
  }

  const scenarioSamples: ScenarioSample[] = samples.map(
    ({ unit: _unit, detCount: _n, oldCarbonYr: _o, bleachingResidualKa: _b, tillDepthCm: _t, sampleC14: _c, ...rest }) => rest,
  );
  return {
    seed,
    size: options.size,
    retreat,
    isochrones: isochrones(retreat),
    labs: DEMO_LABS.map((l) => ({ ...l, methods: [...l.methods] })),
    contributors: DEMO_CONTRIBUTORS.map((c) => ({ ...c })),
    publications: describePublications(new Rng(deriveSeed(seed, "citations")), publications, sites, samples, determinations),
    sites,
    samples: scenarioSamples,
    determinations,
    modelRuns: modelRuns(retreat),
  };
}

/** Year, DOI, region and focus of each paper; the citation is written once its dates are known. */
function makePublications(rng: Rng, n: number): ScenarioPublication[] {
  const out: ScenarioPublication[] = [];
  for (let i = 0; i < n; i++) {
    const year = rng.int(1978, 2024);
    out.push({
      citation: "",
      authors: "",
      title: "",
      journal: "",
      doi: `10.99999/jigs.${year}.${String(i + 1).padStart(4, "0")}`,
      year,
      region: REGIONS[i % REGIONS.length],
      focus: FOCI[Math.floor(i / REGIONS.length) % FOCI.length],
    });
  }
  return out;
}

/**
 * The paper a date cites: one about the site's region and the date's kind, chosen by the site's drawn
 * number (so a site's dates of one kind cite one paper); null when the site is unpublished or no
 * paper covers that kind there.
 */
function citedPublication(
  publications: readonly ScenarioPublication[],
  site: ScenarioSite,
  focus: PublicationFocus,
): number | null {
  if (site.publicationIndex === null) return null;
  const here = publications.flatMap((p, i) => (p.region === site.region && p.focus === focus ? [i] : []));
  return here.length ? here[site.publicationIndex % here.length] : null;
}

/** A title that says what the paper reports: its methods, materials and region. */
export function publicationTitle(region: string, cited: readonly { method: string; material: string }[]): string {
  const lum = cited.filter((c) => c.method === "luminescence").length;
  const where = `the ${region}`;
  if (cited.length === 0) return `Ice-marginal landforms of ${where}`;
  if (lum === cited.length) return `Luminescence ages from glacial and proglacial sands of ${where}`;
  if (lum > 0) return `Radiocarbon and luminescence chronology of ice retreat in ${where}`;
  if (cited.every((c) => MARINE_MATERIALS.has(c.material))) return `Marine radiocarbon ages and reservoir offsets along ${where}`;
  if (cited.every((c) => !MARINE_MATERIALS.has(c.material)))
    return `Radiocarbon ages of lake, bog and terrestrial deposits in ${where}`;
  return `Radiocarbon chronology of deglaciation in ${where}`;
}

/**
 * Writes each paper's citation from what it reports: the title from the methods and materials of the
 * dates that cite it, the first author the contributor who submitted most of its sites.
 */
function describePublications(
  rng: Rng,
  publications: readonly ScenarioPublication[],
  sites: readonly ScenarioSite[],
  samples: readonly ScenarioSample[],
  determinations: readonly ScenarioDetermination[],
): ScenarioPublication[] {
  return publications.map((p, pi) => {
    const cited = determinations
      .filter((d) => d.publicationIndex === pi)
      .map((d) => ({ method: d.method, material: samples[d.sampleIndex].material }));
    const bySubmitter = new Map<number, number>();
    for (const d of determinations) {
      const site = sites[samples[d.sampleIndex].siteIndex];
      if (d.publicationIndex !== pi || DEMO_CONTRIBUTORS[site.contributorIndex].surname === null) continue;
      bySubmitter.set(site.contributorIndex, (bySubmitter.get(site.contributorIndex) ?? 0) + 1);
    }
    const lead = [...bySubmitter].sort((a, b) => b[1] - a[1] || a[0] - b[0])[0]?.[0];
    const volume = p.year - 1970;
    const first = rng.int(1, 400);
    const title = `${publicationTitle(p.region, cited)} (synthetic)`;
    const authors = authorList(rng, lead === undefined ? undefined : DEMO_CONTRIBUTORS[lead].surname!);
    const journal = `${DEMO_JOURNAL} ${volume}, ${first}–${first + rng.int(8, 30)}`;
    return { ...p, authors, title, journal, citation: formatCitation({ authors, year: p.year, title, journal, doi: p.doi }) };
  });
}

function planSamples(rng: Rng, site: ScenarioSite, siteIndex: number, setting: SettingSpec): PlannedSample[] {
  const minUnits = setting.units.filter((u) => u.kind === "min");
  const maxUnits = setting.units.filter((u) => u.kind === "max");
  const n = rng.weighted([
    [1, 0.2],
    [2, 0.32],
    [3, 0.26],
    [4, 0.14],
    [5, 0.08],
  ] as const);
  // Unit thicknesses for this site, top down.
  const tops: number[] = [];
  const thick: number[] = [];
  let depth = rng.uniform(0, 30);
  for (const u of setting.units) {
    tops.push(depth);
    const t = rng.uniform(u.thicknessCm[0], u.thicknessCm[1]);
    thick.push(t);
    depth += t;
  }
  const tillIndex = setting.units.findIndex((u) => u.kind === "till");
  const tillDepthCm = tillIndex < 0 ? null : round(tops[tillIndex] + thick[tillIndex] / 2, 0);
  const yy = String(rng.int(0, 99)).padStart(2, "0");
  const codePrefix = `${initials(site.name)}${yy}`;
  const drawn: { unit: UnitSpec; years: number }[] = [];
  for (let i = 0; i < n; i++) {
    const unit = maxUnits.length && rng.chance(0.35) ? rng.pick(maxUnits) : rng.pick(minUnits);
    drawn.push({ unit, years: rng.uniform(unit.years[0], unit.years[1]) });
  }
  const out: PlannedSample[] = [];
  setting.units.forEach((unit, ui) => {
    // Within a unit, younger material lies higher: for minimum units a longer lag is younger,
    // for maximum units a smaller offset is younger.
    const here = drawn.filter((d) => d.unit === unit);
    here.sort((a, b) => (unit.kind === "min" ? b.years - a.years : a.years - b.years));
    here.forEach((d, j) => {
      const material = rng.weighted(unit.materials);
      const lum = LUMINESCENCE_MATERIALS.has(material);
      const frac = (j + 0.2 + 0.6 * rng.random()) / here.length;
      let depthCm = tops[ui] + frac * thick[ui];
      // Luminescence samples come from at least a metre down, where the cosmic formula holds.
      if (lum && depthCm < 100) depthCm = 100 + rng.uniform(0, 50);
      const trueAge = unit.kind === "min" ? site.deglaciationCalBp - d.years : site.advanceCalBp + d.years;
      out.push({
        siteIndex,
        fieldCode: "",
        material,
        depthCm: round(depthCm, 0),
        stratUnit: unit.name,
        stratOrder: ui + 1,
        context: unit.context,
        constraintKind: unit.kind === "max" ? "maximum" : "minimum",
        trueAgeCalBp: round(trueAge, 1),
        fault: null,
        unit,
        detCount: rng.weighted([
          [1, 0.85],
          [2, 0.11],
          [3, 0.04],
        ] as const),
        oldCarbonYr: 0,
        bleachingResidualKa: 0,
        tillDepthCm,
      });
    });
  });
  out.sort((a, b) => a.depthCm - b.depthCm);
  out.forEach((s, i) => (s.fieldCode = `${codePrefix}-${String(i + 1).padStart(2, "0")}`));
  return out;
}

function fillQuota(
  rng: Rng,
  samples: PlannedSample[],
  quota: number,
  eligible: (s: PlannedSample) => boolean,
  plant: (s: PlannedSample) => void,
) {
  let count = 0;
  for (const s of rng.shuffle(samples.filter(eligible))) {
    if (count >= quota) break;
    if (count + s.detCount > quota + 1) continue;
    plant(s);
    count += s.detCount;
  }
}

function blankDetermination(
  sampleIndex: number,
  labIndex: number,
  publicationIndex: number | null,
  s: PlannedSample,
): ScenarioDetermination {
  return {
    sampleIndex,
    labIndex,
    publicationIndex,
    labCode: "",
    method: "radiocarbon",
    constraintKind: s.constraintKind,
    status: "submitted",
    grade: null,
    c14AgeYr: null,
    c14ErrorYr: null,
    f14c: null,
    f14cError: null,
    d13cPermil: null,
    ageNormalised: true,
    isLimit: false,
    pretreatment: null,
    curveName: null,
    deltaRYr: null,
    deltaRErrorYr: null,
    deltaRCurve: null,
    signal: null,
    mineral: null,
    deGy: null,
    deErrorGy: null,
    doseRateGyPerKa: null,
    doseRateErrorGyPerKa: null,
    kPercent: null,
    uPpm: null,
    thPpm: null,
    waterContentFraction: null,
    grainSizeUm: null,
    burialDepthM: null,
    densityGPerCm3: null,
    conversionFactors: null,
    measurementYear: null,
    aliquots: null,
    ageModel: null,
    notes: null,
    submittedDaysAgo: 0,
    review: null,
    truth: { trueAgeCalBp: s.trueAgeCalBp, plantedFault: s.fault },
  };
}

/**
 * Radiocarbon backwards: the sample's 14C age is drawn from the curve (± its σ) at the true
 * calendar age, plus the local reservoir offset for marine material, plus any planted old
 * carbon, plus the lab's counting error.
 */
function simulateRadiocarbon(
  rng: Rng,
  d: ScenarioDetermination,
  s: PlannedSample,
  site: ScenarioSite,
  lab: ScenarioLab,
  inputs: ScenarioInputs,
) {
  const marine = MARINE_MATERIALS.has(s.material);
  const curve = marine ? inputs.marine : inputs.intcal;
  const at = preparedCurveAt(curve, s.trueAgeCalBp);
  if (!at) throw new Error(`True age ${s.trueAgeCalBp} cal BP is outside the ${marine ? "marine" : "atmospheric"} curve.`);
  // The curve's own scatter and the local reservoir belong to the sample, not to each
  // measurement: replicates on one sample share them and differ by counting error alone.
  const sector = SECTOR_DELTA_R[coastalSector(site.longitude, site.latitude)];
  s.sampleC14 ??= rng.normal(at.c14, at.sigma) + (marine ? rng.normal(sector.deltaR, sector.error) : 0);
  let c14 = s.sampleC14;
  if (marine) {
    d.curveName = "marine20";
    d.deltaRYr = sector.deltaR;
    d.deltaRErrorYr = sector.error;
    d.deltaRCurve = "marine20";
  } else {
    d.curveName = "intcal20";
  }
  c14 += s.oldCarbonYr;
  const labError = Math.max(25, Math.min(120, rng.normal(lab.typicalErrorYr * (0.6 + c14 / 25000), 6)));
  const measured = c14 + rng.normal(0, labError);
  const quoted = quoteAge(measured, labError);
  d.method = "radiocarbon";
  d.c14AgeYr = quoted.age;
  d.c14ErrorYr = quoted.error;
  if (lab.reportsF14c) {
    const f = f14cFromAge(measured, labError);
    d.f14c = round(f.f14c, 5);
    d.f14cError = round(f.error, 5);
  }
  const [mean, sd] = D13C[s.material] ?? [-25, 2];
  d.d13cPermil = round(rng.normal(mean, sd), 1);
  d.pretreatment = PRETREATMENT[s.material] ?? null;
  if (s.fault === "old_carbon" && rng.chance(0.3)) d.notes = "Low organic content; whole sample combusted.";
}

/**
 * Luminescence backwards: De = age (ka, before the year of measurement) × dose rate, plus
 * measurement scatter; a partially bleached sample carries a residual dose on top.
 */
function simulateLuminescence(rng: Rng, d: ScenarioDetermination, s: PlannedSample, site: ScenarioSite) {
  const quartz = s.material === "quartz";
  const year = rng.int(2005, 2024);
  const ageKa = (s.trueAgeCalBp + (year - 1950)) / 1000;
  let rate: number;
  let rateError: number;
  let factors: ConversionFactorKey = rng.chance(0.7) ? "guerin2011" : "adamiec1998";
  if (quartz && rng.chance(0.6)) {
    // Dose rate from K, U, Th, water and burial depth, with the registry's own formulas.
    const depthM = s.depthCm / 100;
    const density = round(rng.uniform(1.75, 2.0), 2);
    factors = "guerin2011";
    let k = 0;
    let u = 0;
    let th = 0;
    let w = 0;
    const grain = rng.pick([150, 180, 212, 250]);
    let br = null as FullDoseRate | null;
    for (let i = 0; i < 50; i++) {
      k = round(rng.uniform(0.8, 2.3), 2);
      u = round(rng.uniform(0.7, 2.8), 2);
      th = round(rng.uniform(2.5, 9.5), 2);
      w = round(rng.uniform(0.05, 0.25), 3);
      // The stored path's own reading of the fields the row keeps, so the page recomputes the same.
      const r = doseRateFromFields({
        signal: "OSL",
        mineral: "quartz",
        kPercent: k,
        uPpm: u,
        thPpm: th,
        waterContentFraction: w,
        grainSizeUm: grain,
        burialDepthM: depthM,
        densityGPerCm3: density,
        conversionFactors: factors,
        site: { latitude: site.latitude, longitude: site.longitude, elevationM: site.elevationM },
      });
      br = r?.ok ? r.result : null;
      if (br && br.total >= 1.5 && br.total <= 3.5) break;
    }
    rate = br!.total;
    rateError = br!.totalError;
    d.kPercent = k;
    d.uPpm = u;
    d.thPpm = th;
    d.waterContentFraction = w;
    d.burialDepthM = depthM;
    d.densityGPerCm3 = density;
    d.grainSizeUm = grain;
    d.doseRateComputed = true;
  } else {
    rate = rng.uniform(1.5, 3.5);
    rateError = rate * rng.uniform(0.04, 0.07);
    d.grainSizeUm = rng.pick([90, 150, 180, 212]);
    if (!quartz) d.notes = "Dose rate includes an internal K content of 12.5 ± 0.5 %.";
  }
  const relDe = rng.uniform(0.03, 0.07);
  let de = ageKa * rate * (1 + rng.normal(0, relDe));
  if (s.fault === "partial_bleaching") de += s.bleachingResidualKa * rate;
  d.method = "luminescence";
  d.signal = quartz ? "OSL" : "pIRIR";
  d.mineral = quartz ? "quartz" : "K-feldspar";
  d.deGy = round(de, 3);
  d.deErrorGy = round(de * relDe, 3);
  d.doseRateGyPerKa = rate;
  d.doseRateErrorGyPerKa = rateError;
  d.conversionFactors = factors;
  d.measurementYear = year;
  d.aliquots = rng.int(12, 48);
  d.ageModel = s.fault === "partial_bleaching" || rng.chance(0.85) ? "CAM" : "MAM";
}

const FAULT_FLAGS: Readonly<Record<PlantedFault, string[]>> = {
  old_carbon: ["old_carbon", "bulk_sediment"],
  reworked: ["reworked"],
  partial_bleaching: ["partial_bleaching"],
  wrong_delta_r: ["reservoir_uncertain"],
};

const FAULT_COMMENTS: Readonly<Record<PlantedFault, string>> = {
  old_carbon: "Bulk date much older than macrofossil ages from the same core; old carbon likely.",
  reworked: "Age far older than the site's other deglacial dates; shells probably reworked from older deposits.",
  partial_bleaching: "De scatter and an age older than neighbours suggest incomplete bleaching.",
  wrong_delta_r: "The ΔR quoted does not belong with Marine20; reservoir correction uncertain.",
};

/** A reviewer's verdict: most planted faults are caught, some slip through as usable. */
function reviewFor(rng: Rng, d: ScenarioDetermination, s: PlannedSample): ScenarioReview {
  const daysAgo = rng.int(0, Math.max(0, d.submittedDaysAgo - 1));
  const fault = d.truth.plantedFault;
  if (fault) {
    if (rng.chance(0.8)) {
      return { grade: rng.chance(0.6) ? 0 : 1, flags: [...FAULT_FLAGS[fault]], comment: FAULT_COMMENTS[fault], daysAgo };
    }
    return { grade: 2, flags: [], comment: "No obvious problem.", daysAgo };
  }
  if (s.material === "bulk sediment") {
    return { grade: 2, flags: ["bulk_sediment"], comment: "Bulk sediment; treat as a maximum for the organics.", daysAgo };
  }
  if (rng.chance(0.05)) {
    return { grade: 1, flags: ["weak_stratigraphy"], comment: "Stratigraphic context thinly described.", daysAgo };
  }
  if (d.curveName === "marine20" && rng.chance(0.3)) {
    return { grade: 2, flags: ["reservoir_uncertain"], comment: "Regional ΔR poorly constrained.", daysAgo };
  }
  if (d.method === "luminescence" && d.doseRateGyPerKa !== null && d.kPercent === null && rng.chance(0.3)) {
    return { grade: 2, flags: ["dose_rate_uncertain"], comment: "Dose rate given without its components.", daysAgo };
  }
  return { grade: rng.chance(0.75) ? 3 : 2, flags: [], comment: "Sound material and context.", daysAgo };
}

/** Synthetic model runs: the true history and some runs biased early or late. */
export function modelRuns(retreat: RetreatParams): ScenarioModelRun[] {
  const runs: [string, number, string][] = [
    ["demo-run-true", 0, "The true retreat history of the demo scenario."],
    ["demo-run-early-300", 300, "Retreats 300 years too early."],
    ["demo-run-late-300", -300, "Retreats 300 years too late."],
    ["demo-run-late-700", -700, "Retreats 700 years too late."],
  ];
  return runs.map(([name, biasYears, description]) => ({
    name,
    description,
    biasYears,
    margins: marginsWithBias(retreat, biasYears),
  }));
}

/** Simple counts for logs and tests. */
export function scenarioSummary(s: Scenario) {
  const faults: Record<PlantedFault, number> = { old_carbon: 0, reworked: 0, partial_bleaching: 0, wrong_delta_r: 0 };
  let radiocarbon = 0;
  for (const d of s.determinations) {
    if (d.truth.plantedFault) faults[d.truth.plantedFault]++;
    if (d.method === "radiocarbon") radiocarbon++;
  }
  return {
    sites: s.sites.length,
    samples: s.samples.length,
    determinations: s.determinations.length,
    radiocarbon,
    luminescence: s.determinations.length - radiocarbon,
    faults,
  };
}

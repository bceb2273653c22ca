// One determination as a row of the upload template, the contributor API and the single-entry
// form. Client-safe (no server imports): the form validates with it in the browser through
// Conform, the server validates every uploaded row with the same rules.
//
// Field names are exactly the template's column names. Cells arrive as text (CSV, form data),
// as numbers, booleans or dates (XLSX) or as JSON values (API); every cell is read by the same
// forgiving-but-explicit readers, so "10,5", "45 yr" or a date in a numeric column each get a
// message of their own rather than a bare "expected number".

import { z } from "zod";

// ---------------------------------------------------------------- column catalogue

export type ColumnKind = "number" | "integer" | "text" | "choice" | "yesno";

export type ColumnSpec = {
  name: string;
  label: string;
  kind: ColumnKind;
  /** The unit the column takes, as shown in the template and messages ("" = no unit). */
  unit: string;
  help: string;
  /** Allowed values of a choice column (matched without regard to case). */
  choices?: readonly string[];
  group: "site" | "sample" | "measurement" | "radiocarbon" | "luminescence" | "provenance";
  /** Header spellings recognised when guessing an upload's column mapping (already normalised). */
  synonyms?: readonly string[];
};

export const ROW_METHODS = ["radiocarbon", "luminescence"] as const;
export const ROW_SIGNALS = ["OSL", "IRSL", "TL", "pIRIR"] as const;
export const ROW_CONSTRAINT_KINDS = ["minimum", "maximum", "direct"] as const;

export const COLUMNS: readonly ColumnSpec[] = [
  {
    name: "site_name",
    label: "Site name",
    kind: "text",
    unit: "",
    group: "site",
    help: "Name of the place sampled. Rows with the same name and coordinates within about 100 m share one site.",
    synonyms: ["site", "site name", "locality", "location name"],
  },
  {
    name: "latitude",
    label: "Latitude",
    kind: "number",
    unit: "decimal degrees (WGS84), north positive",
    group: "site",
    help: "Decimal degrees, WGS84; north is positive, south negative. Not degrees–minutes–seconds.",
    synonyms: ["lat", "latitude n", "lat dd", "lat deg"],
  },
  {
    name: "longitude",
    label: "Longitude",
    kind: "number",
    unit: "decimal degrees (WGS84), east positive",
    group: "site",
    help: "Decimal degrees, WGS84; east is positive, west negative (Labrador is about −64).",
    synonyms: ["lon", "long", "lng", "longitude e", "lon dd", "lon deg"],
  },
  {
    name: "elevation_m",
    label: "Elevation",
    kind: "number",
    unit: "m above sea level",
    group: "site",
    help: "Metres above present sea level.",
    synonyms: ["elevation", "elev", "altitude", "elevation m asl", "elev m"],
  },
  {
    name: "setting",
    label: "Setting",
    kind: "text",
    unit: "",
    group: "site",
    help: "Landform or setting, e.g. raised marine delta, lake basin, moraine crest.",
    synonyms: ["landform", "site setting"],
  },
  {
    name: "sample_code",
    label: "Sample code",
    kind: "text",
    unit: "",
    group: "sample",
    help: "The field code of the sample. Rows with the same site and sample code share one sample (replicates).",
    synonyms: ["sample", "sample id", "field code", "sample name", "field id"],
  },
  {
    name: "material",
    label: "Material",
    kind: "text",
    unit: "",
    group: "sample",
    help: "From the registry's list of materials (e.g. marine shell, plant macrofossil, quartz).",
    synonyms: ["material dated", "dated material", "sample material"],
  },
  {
    name: "depth_cm",
    label: "Depth",
    kind: "number",
    unit: "cm below surface",
    group: "sample",
    help: "Depth of the sample below the surface, in centimetres.",
    synonyms: ["depth", "sample depth", "depth cm"],
  },
  {
    name: "strat_unit",
    label: "Stratigraphic unit",
    kind: "text",
    unit: "",
    group: "sample",
    help: "Name of the unit the sample came from.",
    synonyms: ["unit", "stratigraphic unit", "strat unit", "layer"],
  },
  {
    name: "strat_order",
    label: "Unit order",
    kind: "integer",
    unit: "position, 1 = uppermost",
    group: "sample",
    help: "Position of the unit in the site's column, 1 = uppermost.",
    synonyms: ["unit order", "stratigraphic order", "order"],
  },
  {
    name: "context",
    label: "Context",
    kind: "text",
    unit: "",
    group: "sample",
    help: "What the sample tells about the ice, e.g. shells in growth position in glaciomarine silt.",
    synonyms: ["sample context", "description"],
  },
  {
    name: "method",
    label: "Method",
    kind: "choice",
    unit: "",
    group: "measurement",
    choices: ROW_METHODS,
    help: "radiocarbon or luminescence.",
    synonyms: ["dating method", "technique"],
  },
  {
    name: "lab_code",
    label: "Lab code",
    kind: "text",
    unit: "",
    group: "measurement",
    help: "The laboratory's code for this measurement; unique across the registry.",
    synonyms: ["lab id", "lab number", "lab no", "laboratory code", "lab ref"],
  },
  {
    name: "lab_name",
    label: "Laboratory",
    kind: "text",
    unit: "",
    group: "measurement",
    help: "The laboratory that measured it. Left empty: the lab whose code prefix matches, else your own lab.",
    synonyms: ["lab", "laboratory", "laboratory name"],
  },
  {
    name: "constraint_kind",
    label: "Constraint kind",
    kind: "choice",
    unit: "",
    group: "measurement",
    choices: ROW_CONSTRAINT_KINDS,
    help: "minimum (free of ice by this time), maximum (ice reached the site after this time) or direct.",
    synonyms: ["constraint", "constraint type", "kind", "limiting"],
  },
  {
    name: "c14_age",
    label: "14C age",
    kind: "number",
    unit: "14C yr BP",
    group: "radiocarbon",
    help: "Conventional radiocarbon age in 14C years BP (not ka, not cal BP).",
    synonyms: ["age", "14c age", "c14 age", "radiocarbon age", "age 14c yr bp", "conventional age", "14c yr bp"],
  },
  {
    name: "c14_error",
    label: "14C age error",
    kind: "number",
    unit: "14C yr (1σ)",
    group: "radiocarbon",
    help: "One standard deviation of the 14C age, in years.",
    synonyms: ["error", "age error", "14c error", "c14 error", "sigma", "1 sigma", "uncertainty", "age sd"],
  },
  {
    name: "f14c",
    label: "F14C",
    kind: "number",
    unit: "fraction modern",
    group: "radiocarbon",
    help: "Fraction modern carbon, instead of an age (not pMC: 45.2 pMC is 0.452).",
    synonyms: ["fm", "fraction modern"],
  },
  {
    name: "f14c_error",
    label: "F14C error",
    kind: "number",
    unit: "fraction modern (1σ)",
    group: "radiocarbon",
    help: "One standard deviation of F14C.",
    synonyms: ["fm error", "f14c sd"],
  },
  {
    name: "d13c",
    label: "δ13C",
    kind: "number",
    unit: "‰ VPDB",
    group: "radiocarbon",
    help: "δ13C in per mil (VPDB).",
    synonyms: ["delta13c", "δ13c", "d13c permil", "13c"],
  },
  {
    name: "age_normalised",
    label: "Age δ13C-normalised",
    kind: "yesno",
    unit: "yes/no",
    group: "radiocarbon",
    help: "yes (default) when the reported age is already normalised to δ13C = −25 ‰ (a conventional age).",
    synonyms: ["normalised", "normalized", "age normalized"],
  },
  {
    name: "greater_than",
    label: "Greater than",
    kind: "yesno",
    unit: "yes/no",
    group: "radiocarbon",
    help: "yes when the lab reported the age as “greater than”; stored as a limit and not calibrated.",
    synonyms: ["limit", "greater than age", "infinite"],
  },
  {
    name: "pretreatment",
    label: "Pretreatment",
    kind: "text",
    unit: "",
    group: "radiocarbon",
    help: "Chemical pretreatment, e.g. acid etch, ABA.",
    synonyms: ["pre treatment", "treatment"],
  },
  {
    name: "curve",
    label: "Curve",
    kind: "text",
    unit: "",
    group: "radiocarbon",
    help: "Calibration curve short name: intcal20, marine20 or another curve in the registry. Empty: intcal20 (marine material needs marine20).",
    synonyms: ["calibration curve", "cal curve"],
  },
  {
    name: "delta_r",
    label: "ΔR",
    kind: "number",
    unit: "14C yr",
    group: "radiocarbon",
    help: "Local marine reservoir offset ΔR, in 14C years (marine samples).",
    synonyms: ["dr", "delta r", "reservoir offset", "δr"],
  },
  {
    name: "delta_r_error",
    label: "ΔR error",
    kind: "number",
    unit: "14C yr (1σ)",
    group: "radiocarbon",
    help: "One standard deviation of ΔR.",
    synonyms: ["dr error", "delta r error", "δr error"],
  },
  {
    name: "delta_r_curve",
    label: "ΔR derived against",
    kind: "text",
    unit: "",
    group: "radiocarbon",
    help: "The marine curve the ΔR was derived against (ΔR values do not transfer between curves).",
    synonyms: ["dr curve", "delta r curve"],
  },
  {
    name: "signal",
    label: "Signal",
    kind: "choice",
    unit: "",
    group: "luminescence",
    choices: ROW_SIGNALS,
    help: "OSL, IRSL, TL or pIRIR.",
    synonyms: ["luminescence signal"],
  },
  {
    name: "mineral",
    label: "Mineral",
    kind: "text",
    unit: "",
    group: "luminescence",
    help: "Mineral measured, e.g. quartz, K-feldspar.",
    synonyms: [],
  },
  {
    name: "de_gy",
    label: "De",
    kind: "number",
    unit: "Gy",
    group: "luminescence",
    help: "Equivalent dose in grays.",
    synonyms: ["de", "equivalent dose", "de gy", "dose"],
  },
  {
    name: "de_error_gy",
    label: "De error",
    kind: "number",
    unit: "Gy (1σ)",
    group: "luminescence",
    help: "One standard deviation of De, in grays.",
    synonyms: ["de error", "de sd"],
  },
  {
    name: "dose_rate_gy_per_ka",
    label: "Dose rate",
    kind: "number",
    unit: "Gy/ka",
    group: "luminescence",
    help: "Total environmental dose rate in grays per thousand years. Or give K, U, Th, water, burial depth and density instead.",
    synonyms: ["dose rate", "dose rate gy ka", "dr gy ka"],
  },
  {
    name: "dose_rate_error_gy_per_ka",
    label: "Dose rate error",
    kind: "number",
    unit: "Gy/ka (1σ)",
    group: "luminescence",
    help: "One standard deviation of the dose rate.",
    synonyms: ["dose rate error", "dose rate sd"],
  },
  {
    name: "k_percent",
    label: "K",
    kind: "number",
    unit: "%",
    group: "luminescence",
    help: "Potassium content in per cent.",
    synonyms: ["k", "potassium", "k %"],
  },
  {
    name: "u_ppm",
    label: "U",
    kind: "number",
    unit: "ppm",
    group: "luminescence",
    help: "Uranium content in ppm.",
    synonyms: ["u", "uranium"],
  },
  {
    name: "th_ppm",
    label: "Th",
    kind: "number",
    unit: "ppm",
    group: "luminescence",
    help: "Thorium content in ppm.",
    synonyms: ["th", "thorium"],
  },
  {
    name: "water_content",
    label: "Water content",
    kind: "number",
    unit: "fraction of dry mass (0.15 = 15 %)",
    group: "luminescence",
    help: "Water content as a FRACTION of dry mass: 0.15 means 15 %. A value above 1 is read as a mistake.",
    synonyms: ["water", "water content fraction", "w"],
  },
  {
    name: "grain_size_um",
    label: "Grain size",
    kind: "number",
    unit: "µm",
    group: "luminescence",
    help: "Grain size in micrometres (mean of the fraction measured).",
    synonyms: ["grain size", "grain size um", "grain size µm"],
  },
  {
    name: "burial_depth_m",
    label: "Burial depth",
    kind: "number",
    unit: "m",
    group: "luminescence",
    help: "Burial depth in metres, for the cosmic dose rate.",
    synonyms: ["burial depth", "overburden"],
  },
  {
    name: "density_g_cm3",
    label: "Overburden density",
    kind: "number",
    unit: "g/cm³",
    group: "luminescence",
    help: "Density of the overburden in grams per cubic centimetre.",
    synonyms: ["density", "bulk density"],
  },
  {
    name: "aliquots",
    label: "Aliquots",
    kind: "integer",
    unit: "count",
    group: "luminescence",
    help: "Number of aliquots or grains accepted.",
    synonyms: ["n aliquots", "n"],
  },
  {
    name: "age_model",
    label: "Age model",
    kind: "text",
    unit: "",
    group: "luminescence",
    help: "Statistical age model used for De, e.g. central, minimum.",
    synonyms: ["model"],
  },
  {
    name: "measurement_year",
    label: "Year of measurement",
    kind: "integer",
    unit: "year AD",
    group: "luminescence",
    help: "Year the sample was measured (luminescence ages count back from it).",
    synonyms: ["year measured", "measurement year", "year of measurement"],
  },
  {
    name: "doi",
    label: "DOI",
    kind: "text",
    unit: "",
    group: "provenance",
    help: "DOI of the publication reporting the date, e.g. 10.99999/example.1.",
    synonyms: ["publication doi", "reference doi"],
  },
  {
    name: "notes",
    label: "Notes",
    kind: "text",
    unit: "",
    group: "provenance",
    help: "Anything else.",
    synonyms: ["comment", "comments", "remarks"],
  },
];

export const COLUMN_NAMES = COLUMNS.map((c) => c.name);
const SPEC = new Map(COLUMNS.map((c) => [c.name, c]));

export function columnSpec(name: string): ColumnSpec | undefined {
  return SPEC.get(name);
}

/** Example rows for the template: one radiocarbon, one luminescence (invented values). */
export const EXAMPLE_ROWS: Record<string, string | number>[] = [
  {
    site_name: "Example Cove",
    latitude: 58.7123,
    longitude: -64.3511,
    elevation_m: 42,
    setting: "raised marine delta",
    sample_code: "EXC-01",
    material: "marine shell",
    depth_cm: 120,
    strat_unit: "glaciomarine silt",
    strat_order: 2,
    context: "paired valves in growth position",
    method: "radiocarbon",
    lab_code: "XMPL-0001",
    lab_name: "Example Laboratory",
    constraint_kind: "minimum",
    c14_age: 9850,
    c14_error: 40,
    d13c: 1.2,
    age_normalised: "yes",
    greater_than: "no",
    pretreatment: "acid etch",
    curve: "marine20",
    delta_r: 150,
    delta_r_error: 60,
    delta_r_curve: "marine20",
    doi: "10.99999/example.1",
    notes: "",
  },
  {
    site_name: "Example Terrace",
    latitude: 57.9402,
    longitude: -66.1037,
    elevation_m: 88,
    setting: "outwash terrace",
    sample_code: "EXT-L1",
    material: "quartz",
    depth_cm: 150,
    strat_unit: "aeolian sand",
    strat_order: 1,
    context: "sand above outwash gravel",
    method: "luminescence",
    lab_code: "XMPL-L001",
    lab_name: "Example Laboratory",
    constraint_kind: "minimum",
    signal: "OSL",
    mineral: "quartz",
    de_gy: 18.2,
    de_error_gy: 0.9,
    dose_rate_gy_per_ka: 2.1,
    dose_rate_error_gy_per_ka: 0.1,
    k_percent: 1.6,
    u_ppm: 1.2,
    th_ppm: 4.5,
    water_content: 0.15,
    grain_size_um: 180,
    burial_depth_m: 1.5,
    density_g_cm3: 1.8,
    aliquots: 24,
    age_model: "central",
    measurement_year: 2023,
    doi: "10.99999/example.1",
  },
];

// ---------------------------------------------------------------- the validated row

export type DeterminationRow = {
  site_name: string;
  latitude: number;
  longitude: number;
  elevation_m?: number;
  setting?: string;
  sample_code: string;
  /** The material's name as the registry spells it. */
  material: string;
  depth_cm?: number;
  strat_unit?: string;
  strat_order?: number;
  context?: string;
  method: (typeof ROW_METHODS)[number];
  lab_code: string;
  lab_name?: string;
  constraint_kind: (typeof ROW_CONSTRAINT_KINDS)[number];
  c14_age?: number;
  c14_error?: number;
  f14c?: number;
  f14c_error?: number;
  d13c?: number;
  age_normalised: boolean;
  greater_than: boolean;
  pretreatment?: string;
  /** Lower-case short name; set for every radiocarbon row (intcal20 when left empty). */
  curve?: string;
  delta_r?: number;
  delta_r_error?: number;
  delta_r_curve?: string;
  signal?: (typeof ROW_SIGNALS)[number];
  mineral?: string;
  de_gy?: number;
  de_error_gy?: number;
  dose_rate_gy_per_ka?: number;
  dose_rate_error_gy_per_ka?: number;
  k_percent?: number;
  u_ppm?: number;
  th_ppm?: number;
  /** Fraction of dry mass (0.15 = 15 %). */
  water_content?: number;
  grain_size_um?: number;
  burial_depth_m?: number;
  density_g_cm3?: number;
  aliquots?: number;
  age_model?: string;
  measurement_year?: number;
  /** Bare DOI (a doi.org address is reduced to it). */
  doi?: string;
  notes?: string;
};

export type RowIssue = { column: string; message: string };

/**
 * What validation knows about the registry. `materials` and `curves` come from the database;
 * the optional lookups let the server add checks that need it (duplicates, ages beyond the
 * curve) while the browser runs the same schema without them.
 */
export type RowContext = {
  materials: string[];
  curves: string[];
  /** Materials that need a marine curve; default: none known. */
  marineMaterials?: string[];
  /** Curves that are marine; default: curve names containing "marine". */
  marineCurves?: string[];
  /** Methods each material is dated by (lower-case material → methods), to catch "quartz, radiocarbon". */
  materialMethods?: Record<string, string[]>;
  /** Id of a determination already in the registry with this lab code, if any. */
  labCodeInRegistry?: (labCode: string) => number | null | undefined;
  /** A message when the registry cannot give the row a calendar age (beyond the curve, ...). */
  calendarProblem?: (row: DeterminationRow) => RowIssue | null | undefined;
  /** Current year, for measurement_year bounds (tests pin it). */
  currentYear?: number;
};

// ---------------------------------------------------------------- cell readers

type Read<T> = { value?: T; issue?: string };

const DATE_TEXT = [
  /^\d{4}-\d{1,2}-\d{1,2}([ T]\d{1,2}:\d{2}(:\d{2}(\.\d+)?)?Z?)?$/,
  /^\d{1,2}[./-]\d{1,2}[./-]\d{2,4}$/,
  /^\d{1,2}[ -](jan|feb|mar|apr|may|jun|jul|aug|sep|oct|nov|dec)[a-z]*[ -]\d{2,4}$/i,
  /^(jan|feb|mar|apr|may|jun|jul|aug|sep|oct|nov|dec)[a-z]*\.? \d{1,2},? \d{4}$/i,
];

function isDateText(t: string): boolean {
  return DATE_TEXT.some((re) => re.test(t));
}

function isDateValue(v: unknown): v is Date {
  return v instanceof Date || Object.prototype.toString.call(v) === "[object Date]";
}

/** Blank: nothing, null, or only white space. */
export function isBlankCell(v: unknown): boolean {
  return v == null || (typeof v === "string" && v.trim() === "");
}

const PLAIN_NUMBER = /^[-+−]?(\d+\.?\d*|\.\d+)(e[-+]?\d+)?$/i;
const COMMA_DECIMAL = /^[-+−]?\d{1,3}(\.\d{3})*,\d+$|^[-+−]?\d+,\d+$/;
const NUMBER_WITH_UNIT = /^([-+−]?(?:\d+[.,]?\d*|[.,]\d+))\s*([a-zA-Zµμ%‰°'"][^]*)$/;

function unitPhrase(spec: ColumnSpec): string {
  return spec.unit ? ` in ${spec.unit}` : "";
}

function unitAdvice(spec: ColumnSpec, text: string, num: string, unit: string): string {
  const u = unit.trim().toLowerCase();
  const n = Number(num.replace(",", ".").replace("−", "-"));
  const base = `"${text}": ${spec.name} takes a plain number${unitPhrase(spec)}; leave the unit out`;
  if ((u === "ka" || u === "kyr" || u === "ky") && spec.unit.includes("yr")) {
    return `${base} (${num} ka is ${Math.round(n * 1000)} years).`;
  }
  if ((u === "bp" || u.startsWith("cal")) && spec.name === "c14_age") {
    return `${base}. The age is a conventional 14C age, not calibrated.`;
  }
  if (u === "%" && spec.name === "water_content") return `${base} and give a fraction (${num} % is ${n / 100}).`;
  if (u === "pmc" && spec.name === "f14c") return `${base}; F14C is a fraction (${num} pMC is ${n / 100}).`;
  if (u.startsWith("°") || u.startsWith("'") || /^[nsew]$/.test(u)) {
    return `"${text}": give ${spec.name} in decimal degrees, south and west negative (e.g. 58.71 or -64.35).`;
  }
  return `${base}.`;
}

function readNumber(v: unknown, spec: ColumnSpec): Read<number> {
  if (isBlankCell(v)) return {};
  if (typeof v === "number") {
    if (!Number.isFinite(v)) return { issue: `${spec.name} is not a finite number.` };
    return { value: v };
  }
  if (typeof v === "boolean") return { issue: `${spec.name} takes a number${unitPhrase(spec)}, not ${v ? "TRUE" : "FALSE"}.` };
  if (isDateValue(v)) {
    return {
      issue: `This cell holds a date; ${spec.name} takes a number${unitPhrase(spec)}. Check that the spreadsheet did not turn the value into a date, or that the columns are not shifted.`,
    };
  }
  if (typeof v !== "string") return { issue: `${spec.name} takes a number${unitPhrase(spec)}.` };
  const t = v.trim();
  if (PLAIN_NUMBER.test(t)) return { value: Number(t.replace("−", "-")) };
  if (COMMA_DECIMAL.test(t)) {
    return { issue: `"${t}": use a point as the decimal separator (e.g. ${t.replace(/\./g, "").replace(",", ".")}).` };
  }
  if (/^[-+−]?\d{1,3}(,\d{3})+(\.\d+)?$/.test(t)) {
    return { issue: `"${t}": leave out the thousands separators (e.g. ${t.replace(/,/g, "")}).` };
  }
  if (isDateText(t)) {
    return { issue: `"${t}" is a date; ${spec.name} takes a number${unitPhrase(spec)}. Are the columns shifted?` };
  }
  const pm = /^([-+−]?[\d.]+)\s*(±|\+\/-|\+-)\s*([\d.]+)$/.exec(t);
  if (pm) return { issue: `"${t}": put the value in ${spec.name} and its error in the error column.` };
  const withUnit = NUMBER_WITH_UNIT.exec(t);
  if (withUnit) return { issue: unitAdvice(spec, t, withUnit[1]!, withUnit[2]!) };
  if (/^[<>≥≤]\s*\d/.test(t)) {
    return spec.name === "c14_age"
      ? { issue: `"${t}": write the number alone and set greater_than to yes for a “greater than” age.` }
      : { issue: `"${t}": ${spec.name} takes a plain number${unitPhrase(spec)}.` };
  }
  return { issue: `"${truncate(t)}" is not a number; ${spec.name} takes a number${unitPhrase(spec)}.` };
}

function readInteger(v: unknown, spec: ColumnSpec): Read<number> {
  if (spec.name === "measurement_year") {
    if (isDateValue(v)) return { issue: `This cell holds a date; give the year only (e.g. ${v.getUTCFullYear()}).` };
    if (typeof v === "string" && isDateText(v.trim()))
      return { issue: `"${v.trim()}" is a date; give the year only (e.g. 2023).` };
  }
  const r = readNumber(v, spec);
  if (r.value === undefined) return r;
  if (!Number.isInteger(r.value)) return { issue: `${spec.name} takes a whole number (got ${r.value}).` };
  return r;
}

function truncate(t: string, n = 40): string {
  return t.length > n ? `${t.slice(0, n)}…` : t;
}

function readText(v: unknown, spec: ColumnSpec, max = 200): Read<string> {
  if (isBlankCell(v)) return {};
  if (isDateValue(v)) {
    return {
      issue: `This cell holds a date, not the ${spec.label.toLowerCase()}; format the column as text in the spreadsheet and type it again.`,
    };
  }
  const t = (typeof v === "number" || typeof v === "boolean" ? String(v) : typeof v === "string" ? v : "").trim();
  if (t === "") return { issue: `${spec.name} takes text.` };
  if (t.length > max) return { issue: `${spec.name} is too long (${t.length} characters; at most ${max}).` };
  return { value: t };
}

const YES = new Set(["yes", "y", "true", "1", "ja", "oui"]);
const NO = new Set(["no", "n", "false", "0", "nein", "non"]);

function readYesNo(v: unknown, spec: ColumnSpec): Read<boolean> {
  if (isBlankCell(v)) return {};
  if (typeof v === "boolean") return { value: v };
  if (typeof v === "number" && (v === 0 || v === 1)) return { value: v === 1 };
  const t = String(v).trim().toLowerCase();
  if (YES.has(t)) return { value: true };
  if (NO.has(t)) return { value: false };
  return { issue: `${spec.name} takes yes or no (got "${truncate(String(v))}").` };
}

function readChoice<T extends string>(v: unknown, spec: ColumnSpec, choices: readonly T[]): Read<T> {
  const r = readText(v, spec);
  if (r.value === undefined) return r as Read<T>;
  const match = choices.find((c) => c.toLowerCase() === r.value!.toLowerCase());
  if (match) return { value: match };
  const near = nearest(r.value, choices);
  return {
    issue: `"${truncate(r.value)}" is not a ${spec.label.toLowerCase()}; use ${listWords(choices)}${near ? ` (did you mean ${near}?)` : ""}.`,
  };
}

function listWords(words: readonly string[]): string {
  return words.length <= 1 ? (words[0] ?? "") : `${words.slice(0, -1).join(", ")} or ${words[words.length - 1]}`;
}

// ---------------------------------------------------------------- nearest names

/** Edit distance (insertions, deletions, substitutions), case-insensitive. */
export function levenshtein(a: string, b: string): number {
  const s = a.toLowerCase();
  const t = b.toLowerCase();
  if (s === t) return 0;
  let prev = Array.from({ length: t.length + 1 }, (_, j) => j);
  for (let i = 1; i <= s.length; i++) {
    const cur = [i];
    for (let j = 1; j <= t.length; j++) {
      cur[j] = Math.min(prev[j]! + 1, cur[j - 1]! + 1, prev[j - 1]! + (s[i - 1] === t[j - 1] ? 0 : 1));
    }
    prev = cur;
  }
  return prev[t.length]!;
}

/** The closest candidate, if it is close enough to be a plausible typo (or contains the input). */
export function nearest(input: string, candidates: readonly string[]): string | null {
  let best: string | null = null;
  let bestD = Infinity;
  const low = input.toLowerCase();
  for (const c of candidates) {
    const d = levenshtein(input, c);
    if (d < bestD) {
      bestD = d;
      best = c;
    }
  }
  if (best === null) return null;
  const limit = Math.max(2, Math.ceil(Math.max(input.length, best.length) / 3));
  if (bestD <= limit) return best;
  const containing = candidates.find((c) => c.toLowerCase().includes(low) || low.includes(c.toLowerCase()));
  return containing ?? null;
}

// ---------------------------------------------------------------- coordinates

/** The demo region (northern Labrador and Ungava Bay), used to recognise swapped coordinates. */
export const DEMO_REGION = { south: 55, north: 62, west: -75, east: -58 } as const;

function inDemoRegion(lat: number, lon: number): boolean {
  return lat >= DEMO_REGION.south && lat <= DEMO_REGION.north && lon >= DEMO_REGION.west && lon <= DEMO_REGION.east;
}

// ---------------------------------------------------------------- row validation

export type RowCheck =
  | { ok: true; value: DeterminationRow; issues: []; warnings: RowIssue[] }
  | { ok: false; issues: RowIssue[]; warnings: RowIssue[] };

/** Columns that describe only one method's measurement. */
export const RADIOCARBON_ONLY_COLUMNS = [
  "c14_age",
  "c14_error",
  "f14c",
  "f14c_error",
  "d13c",
  "pretreatment",
  "curve",
  "delta_r",
  "delta_r_error",
  "delta_r_curve",
] as const;
export const LUMINESCENCE_ONLY_COLUMNS = [
  "signal",
  "mineral",
  "de_gy",
  "de_error_gy",
  "dose_rate_gy_per_ka",
  "dose_rate_error_gy_per_ka",
  "k_percent",
  "u_ppm",
  "th_ppm",
  "water_content",
  "grain_size_um",
  "burial_depth_m",
  "density_g_cm3",
  "measurement_year",
  "aliquots",
  "age_model",
] as const;

const TEXT_MAX: Record<string, number> = { notes: 2000, context: 1000 };

/**
 * Validates one row given as column name → cell. Every problem comes back at the column it
 * concerns, all at once, so a contributor fixes a row in one go. Warnings never block a commit.
 */
export function checkRow(raw: Record<string, unknown>, ctx: RowContext): RowCheck {
  const issues: RowIssue[] = [];
  const warnings: RowIssue[] = [];
  const out: Record<string, unknown> = {};
  const add = (column: string, message: string) => issues.push({ column, message });

  for (const spec of COLUMNS) {
    const cell = raw[spec.name];
    let r: Read<unknown>;
    switch (spec.kind) {
      case "number":
        r = readNumber(cell, spec);
        break;
      case "integer":
        r = readInteger(cell, spec);
        break;
      case "yesno":
        r = readYesNo(cell, spec);
        break;
      case "choice":
        r = readChoice(cell, spec, spec.choices ?? []);
        break;
      default:
        r = readText(cell, spec, TEXT_MAX[spec.name] ?? 200);
    }
    if (r.issue) add(spec.name, r.issue);
    else if (r.value !== undefined) out[spec.name] = r.value;
  }
  const has = (name: string) => out[name] !== undefined;
  const bad = (name: string) => issues.some((i) => i.column === name);
  const num = (name: string) => out[name] as number | undefined;
  const need = (name: string, message: string) => {
    if (!has(name) && !bad(name)) add(name, message);
  };

  need("site_name", "Give the site name.");
  need("sample_code", "Give the sample code.");
  need("lab_code", "Give the lab code.");
  need("method", "Give the method: radiocarbon or luminescence.");
  need("constraint_kind", "Give the constraint kind: minimum, maximum or direct.");
  need("material", "Give the material.");
  need("latitude", "Give the latitude in decimal degrees.");
  need("longitude", "Give the longitude in decimal degrees.");

  // Coordinates: range first, then the swapped-columns hint.
  const lat = num("latitude");
  const lon = num("longitude");
  if (lat !== undefined && lon !== undefined && !inDemoRegion(lat, lon) && inDemoRegion(lon, lat)) {
    add(
      "latitude",
      `Latitude and longitude look swapped: ${lat}, ${lon} would put the site at ${describe(lat, lon)}; swapped, it lies at ${lon}° N, ${Math.abs(lat)}° W. Put the latitude in the latitude column.`,
    );
  } else {
    if (lat !== undefined && (lat < -90 || lat > 90)) {
      add(
        "latitude",
        `Latitude ${lat} is outside −90 to 90.${lon !== undefined && lon >= -90 && lon <= 90 && Math.abs(lat) <= 180 ? " Are latitude and longitude swapped?" : ""}`,
      );
    }
    if (lon !== undefined && (lon < -180 || lon > 180)) add("longitude", `Longitude ${lon} is outside −180 to 180.`);
  }

  // Material from the controlled list, matched without regard to case.
  if (typeof out.material === "string") {
    const m = ctx.materials.find((x) => x.toLowerCase() === (out.material as string).toLowerCase());
    if (m) out.material = m;
    else {
      const near = nearest(out.material as string, ctx.materials);
      add(
        "material",
        `"${truncate(out.material as string)}" is not in the list of materials${near ? `; did you mean "${near}"?` : "."}`,
      );
      delete out.material;
    }
  }

  for (const name of ["depth_cm", "burial_depth_m", "grain_size_um", "k_percent", "u_ppm", "th_ppm", "water_content"]) {
    const v = num(name);
    if (v !== undefined && v < 0) add(name, `${name} cannot be negative.`);
  }
  for (const name of ["density_g_cm3", "aliquots", "strat_order"]) {
    const v = num(name);
    if (v !== undefined && v <= 0) add(name, `${name} must be greater than zero.`);
  }
  for (const name of ["c14_error", "f14c_error", "delta_r_error", "de_error_gy", "dose_rate_error_gy_per_ka"]) {
    const v = num(name);
    if (v !== undefined && !(v > 0)) add(name, `${name} must be greater than zero (got ${v}).`);
  }
  const water = num("water_content");
  if (water !== undefined && water > 1 && !bad("water_content")) {
    add("water_content", `Water content ${water} is above 1: give it as a fraction of dry mass (${water} % is ${water / 100}).`);
  }
  const year = num("measurement_year");
  const thisYear = ctx.currentYear ?? new Date().getFullYear();
  if (year !== undefined && (year < 1950 || year > thisYear)) {
    add("measurement_year", `Year of measurement ${year} is not between 1950 and ${thisYear}.`);
  }
  if (typeof out.doi === "string") {
    const doi = (out.doi as string).replace(/^(https?:\/\/)?(dx\.)?doi\.org\//i, "").replace(/^doi:\s*/i, "");
    if (/^10\.\d{4,9}\/\S+$/.test(doi)) out.doi = doi;
    else add("doi", `"${truncate(out.doi as string)}" is not a DOI (they look like 10.99999/example.1).`);
  }

  const method = out.method as DeterminationRow["method"] | undefined;
  const marineMaterials = new Set((ctx.marineMaterials ?? []).map((m) => m.toLowerCase()));
  const marineCurves = new Set(
    (ctx.marineCurves ?? ctx.curves.filter((c) => c.toLowerCase().includes("marine"))).map((c) => c.toLowerCase()),
  );
  if (method && typeof out.material === "string" && ctx.materialMethods) {
    const methods = ctx.materialMethods[(out.material as string).toLowerCase()];
    if (methods && !methods.includes(method)) {
      add("material", `${out.material} is dated by ${listWords(methods)}, not ${method}.`);
    }
  }

  if (method === "radiocarbon") {
    const hasAge = has("c14_age") || has("c14_error");
    const hasF = has("f14c") || has("f14c_error");
    if (!hasAge && !hasF && !bad("c14_age") && !bad("f14c")) {
      add("c14_age", "A radiocarbon row needs c14_age and c14_error (or f14c and f14c_error).");
    } else if (hasAge || !hasF) {
      need("c14_age", "Give c14_age with its c14_error.");
      need("c14_error", "Give the error of c14_age (one standard deviation, in 14C years).");
    } else {
      need("f14c", "Give f14c with its f14c_error.");
      need("f14c_error", "Give the error of f14c (one standard deviation).");
    }
    const f = num("f14c");
    if (f !== undefined && !(f > 0)) add("f14c", `f14c must be greater than zero (got ${f}).`);
    if (f !== undefined && f > 2 && !bad("f14c"))
      add("f14c", `f14c ${f} is a fraction near 1 or below; is it given in pMC? (${f} pMC is ${f / 100}).`);
    const d13 = num("d13c");
    if (d13 !== undefined && (d13 < -60 || d13 > 20)) add("d13c", `δ13C ${d13} ‰ is outside the plausible range −60 to 20 ‰.`);
    if (out.age_normalised === false && d13 === undefined && !bad("d13c")) {
      add("d13c", "An age that is not δ13C-normalised needs d13c.");
    }

    // Curve: known short name; marine material needs a marine curve.
    const isMarine = typeof out.material === "string" && marineMaterials.has((out.material as string).toLowerCase());
    if (typeof out.curve === "string") {
      const c = ctx.curves.find((x) => x.toLowerCase() === (out.curve as string).toLowerCase());
      if (c) out.curve = c.toLowerCase();
      else {
        const near = nearest(out.curve as string, ctx.curves);
        add(
          "curve",
          `No curve named "${truncate(out.curve as string)}"${near ? `; did you mean ${near}?` : `; use ${listWords(ctx.curves)}.`}`,
        );
        delete out.curve;
      }
    } else if (!bad("curve")) {
      out.curve = isMarine ? undefined : "intcal20";
    }
    if (isMarine && !bad("curve") && !marineCurves.has(String(out.curve ?? ""))) {
      const marineNames = [...marineCurves];
      add(
        "curve",
        `${out.material} is marine: use ${listWords(marineNames.length ? marineNames : ["marine20"])}${out.curve ? ` rather than ${out.curve}` : ""}.`,
      );
    }
    const onMarineCurve = typeof out.curve === "string" && marineCurves.has(out.curve as string);
    if (has("delta_r") !== has("delta_r_error") && !bad("delta_r") && !bad("delta_r_error")) {
      add(has("delta_r") ? "delta_r_error" : "delta_r", "Give ΔR together with its error.");
    }
    if (onMarineCurve && !has("delta_r") && !bad("delta_r")) {
      warnings.push({
        column: "delta_r",
        message: "No ΔR given for a marine sample: calibrated with ΔR 0 ± 0, which is rarely right.",
      });
    }
    if (has("delta_r") && !has("delta_r_curve")) {
      warnings.push({ column: "delta_r_curve", message: "ΔR given without the curve it was derived against." });
    }
    if (has("delta_r") && !onMarineCurve && typeof out.curve === "string") {
      warnings.push({ column: "delta_r", message: `ΔR is only applied on a marine curve; ${out.curve} ignores it.` });
    }
  } else if (method === "luminescence") {
    need("de_gy", "A luminescence row needs de_gy (equivalent dose, Gy).");
    need("de_error_gy", "Give the error of de_gy (one standard deviation, in Gy).");
    const de = num("de_gy");
    if (de !== undefined && !(de > 0)) add("de_gy", `de_gy must be greater than zero (got ${de}).`);
    const hasRate = has("dose_rate_gy_per_ka") || has("dose_rate_error_gy_per_ka");
    const parts = ["k_percent", "u_ppm", "th_ppm", "water_content", "burial_depth_m", "density_g_cm3"];
    const hasParts = parts.some(has);
    if (hasRate || !hasParts) {
      if (!hasRate && !parts.some(bad)) {
        add(
          "dose_rate_gy_per_ka",
          "Give dose_rate_gy_per_ka with its error, or K, U, Th, water content, burial depth and density to compute it.",
        );
      } else {
        need("dose_rate_gy_per_ka", "Give dose_rate_gy_per_ka with its error.");
        need("dose_rate_error_gy_per_ka", "Give the error of the dose rate (one standard deviation, in Gy/ka).");
      }
      const rate = num("dose_rate_gy_per_ka");
      if (rate !== undefined && !(rate > 0))
        add("dose_rate_gy_per_ka", `dose_rate_gy_per_ka must be greater than zero (got ${rate}).`);
    } else {
      for (const p of parts) need(p, `To compute the dose rate, give ${p} too (or give dose_rate_gy_per_ka with its error).`);
    }
    need("measurement_year", "A luminescence row needs the year of measurement.");
  }

  // Values that belong to the other method are not part of this determination: say so, and they
  // are not stored (the form never sends them; a spreadsheet row may carry them by accident).
  if (method === "radiocarbon" || method === "luminescence") {
    const other = method === "radiocarbon" ? LUMINESCENCE_ONLY_COLUMNS : RADIOCARBON_ONLY_COLUMNS;
    for (const column of other) {
      if (has(column)) {
        warnings.push({ column, message: `${column} is not used for a ${method} row and is not stored.` });
      }
    }
  }

  // Duplicates against the registry; duplicates within a file are the caller's (it sees every row).
  if (typeof out.lab_code === "string" && ctx.labCodeInRegistry) {
    const existing = ctx.labCodeInRegistry(out.lab_code as string);
    if (existing != null) {
      add("lab_code", `Lab code ${out.lab_code} is already in the registry: /determinations/${existing}`);
    }
  }

  if (issues.length > 0) return { ok: false, issues, warnings };
  if (out.age_normalised === undefined) out.age_normalised = true;
  if (out.greater_than === undefined) out.greater_than = false;
  const row = out as DeterminationRow;
  if (ctx.calendarProblem) {
    const problem = ctx.calendarProblem(row);
    if (problem) return { ok: false, issues: [problem], warnings };
  }
  return { ok: true, value: row, issues: [], warnings };
}

function describe(lat: number, lon: number): string {
  const ns = lat >= 0 ? "N" : "S";
  const ew = lon >= 0 ? "E" : "W";
  return `${Math.abs(lat)}° ${ns}, ${Math.abs(lon)}° ${ew}`;
}

/**
 * The row schema for Conform and the API: an object whose keys are the column names, validated
 * as a whole by `checkRow` so every message lands on its own field.
 */
export function makeRowSchema(ctx: RowContext) {
  const shape = Object.fromEntries(COLUMNS.map((c) => [c.name, z.unknown().optional()])) as Record<
    string,
    z.ZodOptional<z.ZodUnknown>
  >;
  return z.object(shape).transform((raw, zctx): DeterminationRow => {
    const result = checkRow(raw, ctx);
    if (!result.ok) {
      for (const issue of result.issues) {
        zctx.addIssue({ code: "custom", path: [issue.column], message: issue.message, input: raw[issue.column] });
      }
      return z.NEVER;
    }
    return result.value;
  });
}

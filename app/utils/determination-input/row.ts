import { ROW_CONSTRAINT_KINDS, ROW_METHODS, ROW_SIGNALS } from "#app/utils/determination-input/columns.ts";

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
/** A box in decimal degrees. */
export type Region = { south: number; north: number; west: number; east: number };

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
  /** Where this installation's sites lie (REGION_OF_INTEREST): coordinates that only fit it swapped get a hint. */
  regionOfInterest?: Region | null;
  /** Current year, for measurement_year bounds (tests pin it). */
  currentYear?: number;
};

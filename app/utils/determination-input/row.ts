import { ROW_CONSTRAINT_KINDS, ROW_GRAIN_USES, ROW_METHODS, ROW_SIGNALS } from "#app/utils/determination-input/columns.ts";

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
  /** The reported age was normalised to δ13C = 0 ‰ (older shell practice); false when not said. */
  normalised_to_zero_permil: boolean;
  greater_than: boolean;
  pretreatment?: string;
  /** Lower-case short name; set for every radiocarbon row (intcal20 when left empty). */
  curve?: string;
  delta_r?: number;
  delta_r_error?: number;
  delta_r_curve?: string;
  /** Freshwater (hard-water) offset ± 1σ, 14C yr, applied on an atmospheric curve like ΔR. */
  freshwater_offset?: number;
  freshwater_offset_error?: number;
  signal?: (typeof ROW_SIGNALS)[number];
  mineral?: string;
  de_gy?: number;
  de_error_gy?: number;
  dose_rate_gy_per_ka?: number;
  dose_rate_error_gy_per_ka?: number;
  k_percent?: number;
  /** Errors are 1σ in the unit of their value; a missing one is assumed at its documented default. */
  k_error_percent?: number;
  u_ppm?: number;
  u_error_ppm?: number;
  th_ppm?: number;
  th_error_ppm?: number;
  rb_ppm?: number;
  rb_error_ppm?: number;
  /** Fraction of dry mass (0.15 = 15 %). */
  water_content?: number;
  water_content_error?: number;
  grain_size_um?: number;
  grain_use?: (typeof ROW_GRAIN_USES)[number];
  etch_depth_um?: number;
  a_value?: number;
  a_value_error?: number;
  internal_k_percent?: number;
  internal_k_error_percent?: number;
  internal_rb_ppm?: number;
  internal_rb_error_ppm?: number;
  burial_depth_m?: number;
  burial_depth_error_m?: number;
  density_g_cm3?: number;
  density_error_g_cm3?: number;
  lab_cosmic_gy_per_ka?: number;
  lab_cosmic_error_gy_per_ka?: number;
  aliquots?: number;
  age_model?: string;
  measurement_year?: number;
  /** Bare DOI (a doi.org address is reduced to it). */
  doi?: string;
  /** The publication's citation: all four or none (checkCitation). */
  pub_authors?: string;
  pub_year?: number;
  pub_title?: string;
  pub_journal?: string;
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

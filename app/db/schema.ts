import type { FeatureCollection } from "geojson";
import { sql } from "drizzle-orm";
import {
  type AnySQLiteColumn,
  blob,
  index,
  integer,
  primaryKey,
  real,
  sqliteTable,
  text,
  uniqueIndex,
} from "drizzle-orm/sqlite-core";

/*
 * The whole Thawline data model. Measurements are stored unrounded with their unit in the
 * column name; timestamps are integer milliseconds since the epoch (UTC).
 */

const now = sql`(cast(unixepoch('subsec') * 1000 as integer))`;
const createdAt = () => integer("created_at", { mode: "timestamp_ms" }).notNull().default(now);

export const ROLES = ["contributor", "reviewer", "modeller", "editor"] as const;
export type Role = (typeof ROLES)[number];

export const METHODS = ["radiocarbon", "luminescence", "exposure"] as const;
export type Method = (typeof METHODS)[number];

export const LUMINESCENCE_SIGNALS = ["OSL", "IRSL", "TL", "pIRIR"] as const;

export const CONSTRAINT_KINDS = ["minimum", "maximum", "direct"] as const;
export type ConstraintKind = (typeof CONSTRAINT_KINDS)[number];

/**
 * Life of a determination: submitted → in_review → graded; withdrawn by its contributor before grading.
 * A reviewer's question puts it in awaiting_answer until the contributor answers (back to in_review).
 */
export const STATUSES = ["submitted", "in_review", "awaiting_answer", "graded", "withdrawn"] as const;
export type Status = (typeof STATUSES)[number];

export const CHECK_SEVERITIES = ["pass", "note", "warning", "conflict"] as const;
export type CheckSeverity = (typeof CHECK_SEVERITIES)[number];

export const CHECK_KINDS = [
  "value_range",
  "marine",
  "replicates",
  "stratigraphy",
  "neighbours",
  "reconstruction",
  "duplicates",
] as const;
export type CheckKind = (typeof CHECK_KINDS)[number];

export const FLAGS = [
  "young_carbon",
  "old_carbon",
  "reworked",
  "bulk_sediment",
  "reservoir_uncertain",
  "partial_bleaching",
  "near_saturation",
  "dose_rate_uncertain",
  "weak_stratigraphy",
  "location_uncertain",
] as const;
export type Flag = (typeof FLAGS)[number];

// ---------------------------------------------------------------- reference rows (filled by a migration)

export const roles = sqliteTable("roles", {
  name: text("name", { enum: ROLES }).primaryKey(),
  description: text("description").notNull(),
});

export const grades = sqliteTable("grades", {
  value: integer("value").primaryKey(),
  name: text("name").notNull(),
  description: text("description").notNull(),
});

export const materials = sqliteTable("materials", {
  name: text("name").primaryKey(),
  methods: text("methods").notNull(), // comma-separated methods the material is dated by
  marine: integer("marine", { mode: "boolean" }).notNull().default(false),
});

// ---------------------------------------------------------------- people and access

export const users = sqliteTable("users", {
  id: integer("id").primaryKey({ autoIncrement: true }),
  email: text("email").notNull().unique(),
  name: text("name").notNull(),
  active: integer("active", { mode: "boolean" }).notNull().default(true),
  labId: integer("lab_id").references(() => labs.id),
  createdAt: createdAt(),
  lastSignInAt: integer("last_sign_in_at", { mode: "timestamp_ms" }),
});

export const userRoles = sqliteTable(
  "user_roles",
  {
    userId: integer("user_id")
      .notNull()
      .references(() => users.id, { onDelete: "cascade" }),
    role: text("role", { enum: ROLES })
      .notNull()
      .references(() => roles.name),
  },
  (t) => [primaryKey({ columns: [t.userId, t.role] })],
);

export const sessions = sqliteTable(
  "sessions",
  {
    id: text("id").primaryKey(),
    userId: integer("user_id")
      .notNull()
      .references(() => users.id, { onDelete: "cascade" }),
    expiresAt: integer("expires_at", { mode: "timestamp_ms" }).notNull(),
    createdAt: createdAt(),
    lastSeenAt: integer("last_seen_at", { mode: "timestamp_ms" }),
    userAgent: text("user_agent"),
    ip: text("ip"),
  },
  (t) => [index("sessions_user_idx").on(t.userId)],
);

export const apiTokens = sqliteTable(
  "api_tokens",
  {
    id: integer("id").primaryKey({ autoIncrement: true }),
    userId: integer("user_id")
      .notNull()
      .references(() => users.id, { onDelete: "cascade" }),
    label: text("label").notNull(),
    tokenHash: text("token_hash").notNull().unique(),
    prefix: text("prefix").notNull(), // first characters, shown so people can tell tokens apart
    createdAt: createdAt(),
    lastUsedAt: integer("last_used_at", { mode: "timestamp_ms" }),
    revokedAt: integer("revoked_at", { mode: "timestamp_ms" }),
  },
  (t) => [index("api_tokens_user_idx").on(t.userId)],
);

/**
 * Sign-in codes already used (key `sign-in:spent:<hash>`, window_start = when; auth/spent-codes.server.ts).
 * It held every rate-limit counter until those moved into memory (decision 020).
 */
export const rateLimits = sqliteTable("rate_limits", {
  key: text("key").primaryKey(),
  windowStart: integer("window_start").notNull(),
  count: integer("count").notNull(),
});

// ---------------------------------------------------------------- provenance

export const labs = sqliteTable("labs", {
  id: integer("id").primaryKey({ autoIncrement: true }),
  name: text("name").notNull().unique(),
  codePrefix: text("code_prefix").notNull().unique(),
  city: text("city"),
  lastMapping: text("last_mapping", { mode: "json" }).$type<Record<string, string>>(),
  /** False for a lab registered from an upload (a new lab_name or an unknown code prefix) until an editor confirms or merges it. */
  confirmed: integer("confirmed", { mode: "boolean" }).notNull().default(true),
  /** Who registered an unconfirmed lab (the uploader). */
  registeredBy: integer("registered_by").references((): AnySQLiteColumn => users.id),
  createdAt: createdAt(),
});

export const publications = sqliteTable("publications", {
  id: integer("id").primaryKey({ autoIncrement: true }),
  /** The reference as one line, written from the fields below by formatCitation (utils/citation.ts). */
  citation: text("citation").notNull(),
  /** The identifier when the paper has one; a publication may have none. */
  doi: text("doi").unique(),
  year: integer("year"),
  /** As the paper lists them, e.g. "Frostvik, A., Kettle, B.". Null only for a publication stored before citations were asked for. */
  authors: text("authors"),
  title: text("title"),
  /** Journal (or book, report series), with volume and pages when given. */
  journal: text("journal"),
  /** The upload whose commit stored it, if one did: undoing that upload takes it out again when nothing cites it. */
  createdInBatchId: integer("created_in_batch_id").references((): AnySQLiteColumn => uploadBatches.id),
  createdAt: createdAt(),
});

// ---------------------------------------------------------------- places, material, measurements

export const sites = sqliteTable(
  "sites",
  {
    id: integer("id").primaryKey({ autoIncrement: true }),
    name: text("name").notNull(),
    latitude: real("latitude").notNull(),
    longitude: real("longitude").notNull(),
    elevationM: real("elevation_m"),
    locationUncertaintyM: real("location_uncertainty_m"),
    setting: text("setting"), // e.g. raised marine delta, lake basin, moraine crest
    region: text("region"),
    notes: text("notes"),
    createdBy: integer("created_by").references(() => users.id),
    /** The upload batch that created this site (null for the form and the seed); undoing the batch may remove it. */
    createdInBatchId: integer("created_in_batch_id").references((): AnySQLiteColumn => uploadBatches.id),
    createdAt: createdAt(),
  },
  (t) => [
    index("sites_name_idx").on(t.name),
    // Case-insensitive name search ("starts with") for the site combobox uses this one.
    index("sites_name_nocase_idx").on(sql`${t.name} collate nocase`),
    index("sites_latlon_idx").on(t.latitude, t.longitude),
  ],
);

export const samples = sqliteTable(
  "samples",
  {
    id: integer("id").primaryKey({ autoIncrement: true }),
    siteId: integer("site_id")
      .notNull()
      .references(() => sites.id),
    fieldCode: text("field_code").notNull(),
    material: text("material")
      .notNull()
      .references(() => materials.name),
    depthCm: real("depth_cm"),
    stratUnit: text("strat_unit"),
    /** Position of the unit in the site's column, 1 = uppermost; used by the stratigraphic-order check. */
    stratOrder: integer("strat_order"),
    context: text("context"),
    /** The upload batch that created this sample (null for the form and the seed); undoing the batch may remove it. */
    createdInBatchId: integer("created_in_batch_id").references((): AnySQLiteColumn => uploadBatches.id),
    createdAt: createdAt(),
  },
  (t) => [index("samples_site_idx").on(t.siteId), uniqueIndex("samples_site_code_idx").on(t.siteId, t.fieldCode)],
);

export const determinations = sqliteTable(
  "determinations",
  {
    id: integer("id").primaryKey({ autoIncrement: true }),
    sampleId: integer("sample_id")
      .notNull()
      .references(() => samples.id),
    labId: integer("lab_id")
      .notNull()
      .references(() => labs.id),
    labCode: text("lab_code").notNull().unique(),
    method: text("method", { enum: METHODS }).notNull(),
    constraintKind: text("constraint_kind", { enum: CONSTRAINT_KINDS }).notNull(),
    status: text("status", { enum: STATUSES }).notNull().default("submitted"),
    /** Incremented on every change; the audit log holds each version's before and after. */
    version: integer("version").notNull().default(1),
    contributorId: integer("contributor_id").references(() => users.id),
    publicationId: integer("publication_id").references(() => publications.id),
    uploadBatchId: integer("upload_batch_id").references(() => uploadBatches.id),
    /** Latest reviewer grade (0–3), kept here for filtering; the reviews table holds the history. */
    grade: integer("grade").references(() => grades.value),

    // radiocarbon
    c14AgeYr: real("c14_age_yr"),
    c14ErrorYr: real("c14_error_yr"),
    f14c: real("f14c"),
    f14cError: real("f14c_error"),
    d13cPermil: real("d13c_permil"),
    /** True when the submitted age is already δ13C-normalised (a conventional age); never normalise twice. */
    ageNormalised: integer("age_normalised", { mode: "boolean" }).notNull().default(true),
    /** "Greater than" age: c14_age_yr holds the limit and the date is not calibrated. */
    isLimit: integer("is_limit", { mode: "boolean" }).notNull().default(false),
    pretreatment: text("pretreatment"),
    curveName: text("curve_name"),
    deltaRYr: real("delta_r_yr"),
    deltaRErrorYr: real("delta_r_error_yr"),
    /** The marine curve a ΔR was derived against (ΔR values do not transfer between curves). */
    deltaRCurve: text("delta_r_curve"),
    /** Freshwater (hard-water) offset of lake and river material on an atmospheric curve, applied like ΔR. */
    freshwaterOffsetYr: real("freshwater_offset_yr"),
    freshwaterOffsetErrorYr: real("freshwater_offset_error_yr"),
    /** The reported age was normalised to δ13C = 0 ‰ (older shell practice), not −25 ‰. */
    normalisedToZeroPermil: integer("normalised_to_zero_permil", { mode: "boolean" }).notNull().default(false),

    // luminescence
    signal: text("signal", { enum: LUMINESCENCE_SIGNALS }),
    mineral: text("mineral"),
    deGy: real("de_gy"),
    deErrorGy: real("de_error_gy"),
    doseRateGyPerKa: real("dose_rate_gy_per_ka"),
    doseRateErrorGyPerKa: real("dose_rate_error_gy_per_ka"),
    /** True when the registry computed the dose rate from the concentrations (false: the lab's own value). */
    doseRateComputed: integer("dose_rate_computed", { mode: "boolean" }).notNull().default(false),
    kPercent: real("k_percent"),
    uPpm: real("u_ppm"),
    thPpm: real("th_ppm"),
    waterContentFraction: real("water_content_fraction"),
    grainSizeUm: real("grain_size_um"),
    burialDepthM: real("burial_depth_m"),
    densityGPerCm3: real("density_g_per_cm3"),
    // The lab's errors (1σ, in the unit of the value) and the further dose-rate inputs; a missing
    // error is assumed at its documented default when the dose rate is computed.
    kErrorPercent: real("k_error_percent"),
    uErrorPpm: real("u_error_ppm"),
    thErrorPpm: real("th_error_ppm"),
    rbPpm: real("rb_ppm"),
    rbErrorPpm: real("rb_error_ppm"),
    waterContentError: real("water_content_error_fraction"),
    /** "coarse" or "fine"; empty: fine below 20 µm, coarse otherwise. */
    grainUse: text("grain_use"),
    etchDepthUm: real("etch_depth_um"),
    aValue: real("a_value"),
    aValueError: real("a_value_error"),
    internalKPercent: real("internal_k_percent"),
    internalKErrorPercent: real("internal_k_error_percent"),
    internalRbPpm: real("internal_rb_ppm"),
    internalRbErrorPpm: real("internal_rb_error_ppm"),
    burialDepthErrorM: real("burial_depth_error_m"),
    densityErrorGPerCm3: real("density_error_g_per_cm3"),
    /** A lab's own cosmic dose rate, used instead of the formula. */
    labCosmicGyPerKa: real("lab_cosmic_gy_per_ka"),
    labCosmicErrorGyPerKa: real("lab_cosmic_error_gy_per_ka"),
    conversionFactors: text("conversion_factors"),
    measurementYear: integer("measurement_year"),
    aliquots: integer("aliquots"),
    ageModel: text("age_model"),

    // exposure (later work)
    be10AtomsPerG: real("be10_atoms_per_g"),
    be10ErrorAtomsPerG: real("be10_error_atoms_per_g"),

    notes: text("notes"),
    createdAt: createdAt(),
    updatedAt: integer("updated_at", { mode: "timestamp_ms" }).notNull().default(now),
  },
  (t) => [
    index("det_sample_idx").on(t.sampleId),
    index("det_lab_idx").on(t.labId),
    index("det_status_idx").on(t.status),
    index("det_method_idx").on(t.method),
    index("det_contributor_idx").on(t.contributorId),
    index("det_batch_idx").on(t.uploadBatchId),
    index("det_c14_idx").on(t.c14AgeYr),
    // The app compares lab codes without regard to case, so the database refuses ABC-1 beside abc-1.
    uniqueIndex("det_lab_code_nocase_idx").on(sql`lower(${t.labCode})`),
  ],
);

// ---------------------------------------------------------------- curves and calibration

export const curves = sqliteTable(
  "curves",
  {
    id: integer("id").primaryKey({ autoIncrement: true }),
    /** Short name used in uploads and the API, e.g. intcal20. Several versions may share it. */
    name: text("name").notNull(),
    displayName: text("display_name").notNull(),
    kind: text("kind", { enum: ["atmospheric", "marine"] }).notNull(),
    version: text("version").notNull(),
    citation: text("citation").notNull(),
    doi: text("doi"),
    calMinBp: integer("cal_min_bp").notNull(),
    calMaxBp: integer("cal_max_bp").notNull(),
    rowCount: integer("row_count").notNull(),
    /** SHA-256 of the imported file, so a repeated import is recognised. */
    checksum: text("checksum").notNull(),
    active: integer("active", { mode: "boolean" }).notNull().default(true),
    createdBy: integer("created_by").references(() => users.id),
    createdAt: createdAt(),
  },
  (t) => [uniqueIndex("curves_name_version_idx").on(t.name, t.version)],
);

export const curvePoints = sqliteTable(
  "curve_points",
  {
    curveId: integer("curve_id")
      .notNull()
      .references(() => curves.id, { onDelete: "cascade" }),
    calBp: real("cal_bp").notNull(),
    c14AgeYr: real("c14_age_yr").notNull(),
    c14SigmaYr: real("c14_sigma_yr").notNull(),
    delta14cPermil: real("delta14c_permil"),
    delta14cSigmaPermil: real("delta14c_sigma_permil"),
  },
  (t) => [primaryKey({ columns: [t.curveId, t.calBp] })],
);

/** A highest-density range; `atCurveLimit` when it is cut by the end of its curve. */
export type HpdRange = { from: number; to: number; p: number; atCurveLimit?: boolean };

/**
 * One calibration of one determination. Earlier results stay when a curve changes; the one in use
 * is marked current. Luminescence ages have no curve (curve_id null) but the same summary and density.
 */
export const calibrations = sqliteTable(
  "calibrations",
  {
    id: integer("id").primaryKey({ autoIncrement: true }),
    determinationId: integer("determination_id")
      .notNull()
      .references(() => determinations.id, { onDelete: "cascade" }),
    curveId: integer("curve_id").references(() => curves.id),
    curveLabel: text("curve_label").notNull(), // e.g. "IntCal20 (2020)", "ΔR 50 ± 40", or "luminescence"
    isCurrent: integer("is_current", { mode: "boolean" }).notNull().default(true),
    medianCalBp: real("median_cal_bp"),
    hpd68: text("hpd68", { mode: "json" }).$type<HpdRange[]>(),
    hpd95: text("hpd95", { mode: "json" }).$type<HpdRange[]>(),
    /** Oldest and youngest bounds of the 95.4 % HPD, denormalised for filtering and sorting. */
    hpd95FromBp: real("hpd95_from_bp"),
    hpd95ToBp: real("hpd95_to_bp"),
    /** Calendar density on a 1-year grid starting at density_start_cal_bp (youngest), Float32 little-endian. */
    densityStartCalBp: integer("density_start_cal_bp"),
    density: blob("density", { mode: "buffer" }),
    /** SHA-256 (hex) of the density bytes, written with them; a release's items name it without copying the density. */
    densitySha256: text("density_sha256"),
    /** Number of Float32 values in the density (its byte length / 4), so reading it needs no blob. */
    densityLength: integer("density_length"),
    /** The probability reaches the first or last year of the curve and is cut there. */
    atCurveLimit: integer("at_curve_limit", { mode: "boolean" }).notNull().default(false),
    /** Plain notes from the calibration (truncation at the curve's end, F14C space near background). */
    notes: text("notes", { mode: "json" }).$type<string[]>(),
    error: text("error"),
    createdAt: createdAt(),
  },
  (t) => [
    index("cal_det_idx").on(t.determinationId),
    // Sorting by median (Explore) and the time-window filters read this index alone: it carries the
    // 95.4 % bounds, the curve and the determination.
    index("cal_current_median_idx").on(t.isCurrent, t.medianCalBp, t.hpd95FromBp, t.hpd95ToBp, t.curveId, t.determinationId),
    // Joining a determination to its current calibration: without both leading columns the planner may
    // pick cal_current_median_idx and scan every current calibration per row. The summary columns after
    // them cover the constraint filters and downloads, so those never read the table's wide rows
    // (each carries a density of several kilobytes), and a release names a density without reading it.
    index("cal_det_current_cover_idx").on(
      t.determinationId,
      t.isCurrent,
      t.medianCalBp,
      t.hpd95FromBp,
      t.hpd95ToBp,
      t.curveId,
      t.curveLabel,
      t.hpd68,
      t.hpd95,
      t.densityStartCalBp,
      t.densityLength,
      t.densitySha256,
    ),
  ],
);

// ---------------------------------------------------------------- review and checks

export const reviews = sqliteTable(
  "reviews",
  {
    id: integer("id").primaryKey({ autoIncrement: true }),
    determinationId: integer("determination_id")
      .notNull()
      .references(() => determinations.id, { onDelete: "cascade" }),
    reviewerId: integer("reviewer_id")
      .notNull()
      .references(() => users.id),
    grade: integer("grade")
      .notNull()
      .references(() => grades.value),
    flags: text("flags", { mode: "json" })
      .$type<Flag[]>()
      .notNull()
      .default(sql`'[]'`),
    comment: text("comment"),
    createdAt: createdAt(),
  },
  (t) => [index("reviews_det_idx").on(t.determinationId)],
);

/** Questions between a reviewer and a contributor about one determination. */
export const reviewMessages = sqliteTable(
  "review_messages",
  {
    id: integer("id").primaryKey({ autoIncrement: true }),
    determinationId: integer("determination_id")
      .notNull()
      .references(() => determinations.id, { onDelete: "cascade" }),
    authorId: integer("author_id")
      .notNull()
      .references(() => users.id),
    body: text("body").notNull(),
    createdAt: createdAt(),
  },
  (t) => [index("review_messages_det_idx").on(t.determinationId)],
);

/** A reviewer's hold on a queue item, so two reviewers do not grade it at once; it lapses at expires_at. */
export const reviewLeases = sqliteTable("review_leases", {
  determinationId: integer("determination_id")
    .primaryKey()
    .references(() => determinations.id, { onDelete: "cascade" }),
  reviewerId: integer("reviewer_id")
    .notNull()
    .references(() => users.id),
  expiresAt: integer("expires_at", { mode: "timestamp_ms" }).notNull(),
});

export const checkResults = sqliteTable(
  "check_results",
  {
    id: integer("id").primaryKey({ autoIncrement: true }),
    determinationId: integer("determination_id")
      .notNull()
      .references(() => determinations.id, { onDelete: "cascade" }),
    check: text("check", { enum: CHECK_KINDS }).notNull(),
    severity: text("severity", { enum: CHECK_SEVERITIES }).notNull(),
    message: text("message").notNull(),
    details: text("details", { mode: "json" }).$type<Record<string, unknown>>(),
    suggestedFlag: text("suggested_flag", { enum: FLAGS }),
    createdAt: createdAt(),
  },
  // The determination index covers "the checks of these determinations" (downloads, the worst-check filter).
  (t) => [index("checks_det_cover_idx").on(t.determinationId, t.check, t.severity), index("checks_severity_idx").on(t.severity)],
);

// ---------------------------------------------------------------- uploads

export type UploadRowError = { row: number; column: string; message: string };

export const uploadBatches = sqliteTable(
  "upload_batches",
  {
    id: integer("id").primaryKey({ autoIncrement: true }),
    /** Opaque public id used in URLs and the API. */
    publicId: text("public_id").notNull().unique(),
    userId: integer("user_id")
      .notNull()
      .references(() => users.id),
    labId: integer("lab_id").references(() => labs.id),
    fileName: text("file_name").notNull(),
    fileKind: text("file_kind", { enum: ["csv", "xlsx", "json"] }).notNull(),
    fileSizeBytes: integer("file_size_bytes").notNull(),
    status: text("status", { enum: ["parsed", "committed", "undone", "discarded"] })
      .notNull()
      .default("parsed"),
    mapping: text("mapping", { mode: "json" }).$type<Record<string, string>>(),
    rowCount: integer("row_count").notNull().default(0),
    validCount: integer("valid_count").notNull().default(0),
    committedCount: integer("committed_count").notNull().default(0),
    errors: text("errors", { mode: "json" }).$type<UploadRowError[]>(),
    /** Parsed rows kept until commit, so nothing reaches the registry before the contributor chooses. */
    payload: text("payload", { mode: "json" }).$type<unknown[]>(),
    createdAt: createdAt(),
    committedAt: integer("committed_at", { mode: "timestamp_ms" }),
    undoneAt: integer("undone_at", { mode: "timestamp_ms" }),
  },
  (t) => [index("uploads_user_idx").on(t.userId)],
);

// ---------------------------------------------------------------- constraint sets and releases

/** A modeller's named filter, to return to; the determinations it selects change with the registry. */
export const constraintSets = sqliteTable(
  "constraint_sets",
  {
    id: integer("id").primaryKey({ autoIncrement: true }),
    userId: integer("user_id")
      .notNull()
      .references(() => users.id, { onDelete: "cascade" }),
    name: text("name").notNull(),
    /** The filter as URL search parameters (the same names as the constraints API). */
    filter: text("filter").notNull(),
    createdAt: createdAt(),
    updatedAt: integer("updated_at", { mode: "timestamp_ms" }).notNull().default(now),
  },
  (t) => [uniqueIndex("constraint_sets_user_name_idx").on(t.userId, t.name)],
);

export const releases = sqliteTable(
  "releases",
  {
    id: integer("id").primaryKey({ autoIncrement: true }),
    slug: text("slug").notNull().unique(),
    name: text("name").notNull(),
    version: text("version").notNull().default("1"),
    description: text("description"),
    filter: text("filter", { mode: "json" }).$type<Record<string, unknown>>().notNull(),
    /** The curves the items were calibrated on, with their citations and how many items use each. */
    curveVersions: text("curve_versions", { mode: "json" })
      .$type<{ curve: string; version: string | null; citation: string | null; doi: string | null; count: number }[]>()
      .notNull(),
    itemCount: integer("item_count").notNull(),
    checksum: text("checksum").notNull(),
    /** Name of the canonical serialisation the checksum was computed by (see docs/releases-checksum.md). */
    checksumRule: text("checksum_rule").notNull().default("thawline-canonical-1"),
    citation: text("citation").notNull().default(""),
    /** The release this one is compared with on its page, fixed when it is published. */
    previousReleaseId: integer("previous_release_id"),
    /** The saved set definition it was published from, if any (the release keeps its own copy of the filter). */
    constraintSetId: integer("constraint_set_id").references(() => constraintSets.id, { onDelete: "set null" }),
    createdBy: integer("created_by")
      .notNull()
      .references(() => users.id),
    publishedAt: integer("published_at", { mode: "timestamp_ms" }).notNull(),
  },
  (t) => [uniqueIndex("releases_name_version_idx").on(t.name, t.version)],
);

export const releaseItems = sqliteTable(
  "release_items",
  {
    releaseId: integer("release_id")
      .notNull()
      .references(() => releases.id),
    determinationId: integer("determination_id")
      .notNull()
      .references(() => determinations.id),
    /** The row exactly as released (measurement, calibration summary, grade, flags); never updated. */
    frozen: text("frozen", { mode: "json" }).$type<Record<string, unknown>>().notNull(),
    /**
     * The calibration whose density was released. Releases since this column was added name it instead
     * of copying the density; a calibration named here is never deleted (recalibration keeps it, not
     * current). Earlier releases hold a copy in density_start_cal_bp/density. Read either way through
     * releaseItemsWithDensities() or RELEASE_DENSITY_SQL (models/releases/releases.server.ts).
     */
    calibrationId: integer("calibration_id").references(() => calibrations.id),
    /** A copy of the calendar density as released (releases published before calibration_id existed). */
    densityStartCalBp: integer("density_start_cal_bp"),
    density: blob("density", { mode: "buffer" }),
  },
  (t) => [
    primaryKey({ columns: [t.releaseId, t.determinationId] }),
    index("release_items_det_idx").on(t.determinationId),
    index("release_items_cal_idx").on(t.calibrationId),
  ],
);

// ---------------------------------------------------------------- reconstructions and model runs

/** A margin reconstruction: isochrones as a GeoJSON FeatureCollection with an age_cal_bp property. */
export const reconstructions = sqliteTable("reconstructions", {
  id: integer("id").primaryKey({ autoIncrement: true }),
  name: text("name").notNull(),
  description: text("description"),
  geojson: text("geojson", { mode: "json" }).$type<FeatureCollection>().notNull(),
  isDemo: integer("is_demo", { mode: "boolean" }).notNull().default(false),
  /** Stated 1σ uncertainty of the isochrone ages, years. */
  uncertaintyYr: real("uncertainty_yr"),
  /** The one reconstruction the reconstruction check uses (at most one row is true). */
  usedForChecks: integer("used_for_checks", { mode: "boolean" }).notNull().default(false),
  createdBy: integer("created_by").references(() => users.id),
  createdAt: createdAt(),
});

export const MODEL_RUN_STATUSES = ["queued", "running", "scored", "failed"] as const;
export type ModelRunStatus = (typeof MODEL_RUN_STATUSES)[number];

export const modelRuns = sqliteTable(
  "model_runs",
  {
    id: integer("id").primaryKey({ autoIncrement: true }),
    userId: integer("user_id")
      .notNull()
      .references(() => users.id),
    releaseId: integer("release_id").references(() => releases.id),
    /** The registry filter scored against when no release was chosen (default: graded 2 or 3). */
    constraintFilter: text("constraint_filter", { mode: "json" }).$type<Record<string, unknown>>(),
    name: text("name").notNull(),
    ensemble: text("ensemble"),
    fileName: text("file_name"),
    /** Where the run file is kept, relative to the data folder. */
    storedPath: text("stored_path"),
    format: text("format", { enum: ["netcdf", "geojson"] }).notNull(),
    status: text("status", { enum: MODEL_RUN_STATUSES }).notNull().default("queued"),
    parameters: text("parameters", { mode: "json" }).$type<Record<string, number | string>>(),
    /** Cal BP of model time 0, when the file's time units did not say. */
    timeOffsetCalBp: real("time_offset_cal_bp"),
    thresholdM: real("threshold_m"),
    /** Grid runs: radius in cells; margins: radius in km. */
    tolerance: real("tolerance"),
    epsilon: real("epsilon"),
    totalLogLikelihood: real("total_log_likelihood"),
    nConstraints: integer("n_constraints"),
    shareAgreeing: real("share_agreeing"),
    maxImplausibility: real("max_implausibility"),
    secondImplausibility: real("second_implausibility"),
    ruledOut: integer("ruled_out", { mode: "boolean" }),
    /** Span, time step and counts of what the scoring saw (outside the span, off the domain). */
    summary: text("summary", { mode: "json" }).$type<Record<string, unknown>>(),
    jobId: integer("job_id").references(() => jobs.id),
    error: text("error"),
    /** Number of time slices in the file (the scoring job counts progress in slices). */
    nSlices: integer("n_slices"),
    /**
     * Set while the file's time units do not say how they map to cal BP: the units and the raw
     * range of model time, shown on the run page's time-mapping step. Cleared once an offset is given.
     */
    timeMapping: text("time_mapping", { mode: "json" }).$type<TimeMappingNeeded>(),
    createdAt: createdAt(),
  },
  (t) => [index("model_runs_user_idx").on(t.userId), index("model_runs_ensemble_idx").on(t.ensemble)],
);

export interface TimeMappingNeeded {
  units: string;
  first: number;
  last: number;
  n: number;
  message: string;
}

/** A run's ice margin at up to 60 slices (lon/lat MultiPolygon coordinates, bounded in size), for the run map. */
export const modelRunMargins = sqliteTable(
  "model_run_margins",
  {
    runId: integer("run_id")
      .notNull()
      .references(() => modelRuns.id, { onDelete: "cascade" }),
    calBp: real("cal_bp").notNull(),
    coordinates: text("coordinates", { mode: "json" }).$type<number[][][][]>().notNull(),
  },
  (t) => [primaryKey({ columns: [t.runId, t.calBp] })],
);

export const modelRunScores = sqliteTable(
  "model_run_scores",
  {
    runId: integer("run_id")
      .notNull()
      .references(() => modelRuns.id, { onDelete: "cascade" }),
    determinationId: integer("determination_id")
      .notNull()
      .references(() => determinations.id),
    score: real("score").notNull(),
    logLikelihood: real("log_likelihood").notNull(),
    implausibility: real("implausibility"),
    modelDeglaciationCalBp: real("model_deglaciation_cal_bp"),
  },
  (t) => [primaryKey({ columns: [t.runId, t.determinationId] })],
);

// ---------------------------------------------------------------- background work and audit

export const jobs = sqliteTable("jobs", {
  id: integer("id").primaryKey({ autoIncrement: true }),
  kind: text("kind").notNull(), // e.g. recalibrate, score
  status: text("status", { enum: ["queued", "running", "done", "failed"] })
    .notNull()
    .default("queued"),
  progress: integer("progress").notNull().default(0),
  total: integer("total").notNull().default(0),
  message: text("message"),
  params: text("params", { mode: "json" }).$type<Record<string, unknown>>(),
  createdBy: integer("created_by").references(() => users.id),
  createdAt: createdAt(),
  finishedAt: integer("finished_at", { mode: "timestamp_ms" }),
});

/**
 * One row whose counter moves with every write to the registry's own tables (triggers from
 * migration 0015; the tables left out are REGISTRY_VERSION_EXEMPT). Cached registry reads are
 * kept per value of `n`, so sessions, jobs' progress, rate limits and token use never empty them.
 */
export const registryVersion = sqliteTable("registry_version", {
  id: integer("id").primaryKey(),
  n: integer("n").notNull().default(0),
});

/** Tables whose writes do not change what the registry says (bookkeeping, sign-in, model runs). */
export const REGISTRY_VERSION_EXEMPT = [
  "__drizzle_migrations",
  "sqlite_sequence",
  "registry_version",
  "api_tokens",
  "audit_log",
  "jobs",
  "rate_limits",
  "review_leases",
  "sessions",
  "model_runs",
  "model_run_margins",
  "model_run_scores",
  "reconstructions",
] as const;

export const auditLog = sqliteTable(
  "audit_log",
  {
    id: integer("id").primaryKey({ autoIncrement: true }),
    at: integer("at", { mode: "timestamp_ms" }).notNull().default(now),
    actorId: integer("actor_id").references(() => users.id),
    action: text("action").notNull(), // e.g. determination.create, determination.update, auth.sign_in
    entity: text("entity").notNull(),
    entityId: text("entity_id"),
    before: text("before", { mode: "json" }).$type<Record<string, unknown> | null>(),
    after: text("after", { mode: "json" }).$type<Record<string, unknown> | null>(),
    ip: text("ip"),
  },
  (t) => [index("audit_entity_idx").on(t.entity, t.entityId), index("audit_at_idx").on(t.at)],
);

// ---------------------------------------------------------------- demo scenario bookkeeping

/**
 * What the demo generator knows and the registry should not: each demo determination's true
 * calendar age (the age of the dated material itself: for a minimum-limiting sample a little
 * younger than its site's deglaciation) and the fault planted in it, if any. Only the seed writes here; tests read it
 * to check that the checks find what was planted.
 */
export const scenarioTruth = sqliteTable("scenario_truth", {
  determinationId: integer("determination_id")
    .primaryKey()
    .references(() => determinations.id, { onDelete: "cascade" }),
  trueAgeCalBp: real("true_age_cal_bp").notNull(),
  plantedFault: text("planted_fault", {
    enum: ["old_carbon", "reworked", "partial_bleaching", "wrong_delta_r"],
  }),
});

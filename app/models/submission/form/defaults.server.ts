// The form's starting values: from a stored determination for an edit, or the contributor's own lab for
// a new one; and the chosen-site helper for the request.

import { eq } from "drizzle-orm";
import type { Db } from "#app/db/client.server.ts";
import { labs, publications, samples, sites } from "#app/db/schema.ts";
import type { DeterminationRow as StoredDetermination } from "#app/models/submission/determinations.server.ts";

/** The form's fields (template column names) as strings, from a stored determination. */
export function formDefaults(db: Db, det: StoredDetermination): Record<string, string> {
  const place = db
    .select({
      sample: samples,
      site: sites,
      labName: labs.name,
      doi: publications.doi,
      pubAuthors: publications.authors,
      pubYear: publications.year,
      pubTitle: publications.title,
      pubJournal: publications.journal,
    })
    .from(samples)
    .innerJoin(sites, eq(sites.id, samples.siteId))
    .innerJoin(labs, eq(labs.id, det.labId))
    .leftJoin(publications, eq(publications.id, det.publicationId ?? -1))
    .where(eq(samples.id, det.sampleId))
    .get()!;
  const s = (v: number | string | null | undefined) => (v == null ? "" : String(v));
  // A dose rate computed from K, U and Th is shown as its inputs only, so an edit recomputes it.
  const computedRate = det.doseRateComputed;
  return {
    site_choice: "existing",
    site_id: String(place.site.id),
    site_name: place.site.name,
    latitude: s(place.site.latitude),
    longitude: s(place.site.longitude),
    elevation_m: s(place.site.elevationM),
    setting: s(place.site.setting),
    sample_code: place.sample.fieldCode,
    material: place.sample.material,
    depth_cm: s(place.sample.depthCm),
    strat_unit: s(place.sample.stratUnit),
    strat_order: s(place.sample.stratOrder),
    context: s(place.sample.context),
    method: det.method,
    lab_code: det.labCode,
    lab_name: place.labName,
    constraint_kind: det.constraintKind,
    c14_age: s(det.c14AgeYr),
    c14_error: s(det.c14ErrorYr),
    f14c: s(det.f14c),
    f14c_error: s(det.f14cError),
    d13c: s(det.d13cPermil),
    age_normalised: det.ageNormalised ? "yes" : "no",
    greater_than: det.isLimit ? "yes" : "",
    pretreatment: s(det.pretreatment),
    curve: s(det.curveName),
    delta_r: s(det.deltaRYr),
    delta_r_error: s(det.deltaRErrorYr),
    delta_r_curve: s(det.deltaRCurve),
    freshwater_offset: s(det.freshwaterOffsetYr),
    freshwater_offset_error: s(det.freshwaterOffsetErrorYr),
    normalised_to_zero_permil: det.normalisedToZeroPermil ? "yes" : "",
    signal: s(det.signal),
    mineral: s(det.mineral),
    de_gy: s(det.deGy),
    de_error_gy: s(det.deErrorGy),
    dose_rate_gy_per_ka: computedRate ? "" : s(det.doseRateGyPerKa),
    dose_rate_error_gy_per_ka: computedRate ? "" : s(det.doseRateErrorGyPerKa),
    k_percent: s(det.kPercent),
    k_error_percent: s(det.kErrorPercent),
    u_ppm: s(det.uPpm),
    u_error_ppm: s(det.uErrorPpm),
    th_ppm: s(det.thPpm),
    th_error_ppm: s(det.thErrorPpm),
    rb_ppm: s(det.rbPpm),
    rb_error_ppm: s(det.rbErrorPpm),
    water_content: s(det.waterContentFraction),
    water_content_error: s(det.waterContentError),
    grain_size_um: s(det.grainSizeUm),
    grain_use: s(det.grainUse),
    etch_depth_um: s(det.etchDepthUm),
    a_value: s(det.aValue),
    a_value_error: s(det.aValueError),
    internal_k_percent: s(det.internalKPercent),
    internal_k_error_percent: s(det.internalKErrorPercent),
    internal_rb_ppm: s(det.internalRbPpm),
    internal_rb_error_ppm: s(det.internalRbErrorPpm),
    burial_depth_m: s(det.burialDepthM),
    burial_depth_error_m: s(det.burialDepthErrorM),
    density_g_cm3: s(det.densityGPerCm3),
    density_error_g_cm3: s(det.densityErrorGPerCm3),
    lab_cosmic_gy_per_ka: s(det.labCosmicGyPerKa),
    lab_cosmic_error_gy_per_ka: s(det.labCosmicErrorGyPerKa),
    measurement_year: s(det.measurementYear),
    aliquots: s(det.aliquots),
    age_model: s(det.ageModel),
    doi: s(place.doi),
    // A stored citation comes back whole (a publication without a DOI is found again by it).
    pub_authors: s(place.pubTitle === null ? null : place.pubAuthors),
    pub_year: s(place.pubTitle === null ? null : place.pubYear),
    pub_title: s(place.pubTitle),
    pub_journal: s(place.pubTitle === null ? null : place.pubJournal),
    notes: s(det.notes),
  };
}

/**
 * For a site chosen from the registry, its name and coordinates come from the registry, never
 * from what the browser sent, so the row is validated with the values that will be stored.
 */
export function applyChosenSite(db: Db, formData: FormData): void {
  if (formData.get("site_choice") !== "existing") return;
  resolveTypedSite(db, formData);
  const id = Number(formData.get("site_id"));
  if (!Number.isSafeInteger(id) || id <= 0) return;
  const site = db.select().from(sites).where(eq(sites.id, id)).get();
  if (!site) return;
  formData.set("site_name", site.name);
  formData.set("latitude", String(site.latitude));
  formData.set("longitude", String(site.longitude));
  for (const name of ["elevation_m", "setting"]) formData.delete(name);
}

/**
 * Without script the site combobox sends only the typed text (site_query): a name that matches
 * exactly one site (any case) chooses it; otherwise site_id stays empty and its message asks.
 */
function resolveTypedSite(db: Db, formData: FormData): void {
  const typed = formData.get("site_query");
  const given = formData.get("site_id");
  if (typeof typed !== "string" || typed.trim() === "" || (typeof given === "string" && given.trim() !== "")) return;
  const matches = db.$client
    .prepare("select id from sites where name = ? collate nocase limit 2")
    .pluck()
    .all(typed.trim()) as number[];
  if (matches.length === 1) formData.set("site_id", String(matches[0]));
}

/** A unique-constraint failure on the lab code: someone stored the same code between validation and write. */
export function isDuplicateLabCode(e: unknown): boolean {
  return (
    e instanceof Error &&
    (e as { code?: string }).code === "SQLITE_CONSTRAINT_UNIQUE" &&
    e.message.includes("determinations.lab_code")
  );
}

/** Starting values for a new determination: the contributor's own lab, radiocarbon. */
export function newFormDefaults(db: Db, userId: number, hasSites: boolean): Record<string, string> {
  const lab = db.$client
    .prepare("select l.name from users u join labs l on l.id = u.lab_id where u.id = ?")
    .pluck()
    .get(userId) as string | undefined;
  return {
    site_choice: hasSites ? "existing" : "new",
    method: "radiocarbon",
    lab_name: lab ?? "",
    age_normalised: "yes",
  };
}

import { describe, expect, it } from "vitest";
import { checkRow } from "#app/utils/determination-input/check-row.ts";
import { COLUMN_NAMES, EXAMPLE_ROWS } from "#app/utils/determination-input/columns.ts";
import { levenshtein, nearest } from "#app/utils/nearest.ts";
import { makeRowSchema } from "#app/utils/determination-input/schema.ts";
import type { RowContext } from "#app/utils/determination-input/row.ts";

const ctx: RowContext = {
  materials: ["marine shell", "foraminifera", "plant macrofossil", "wood", "quartz", "K-feldspar"],
  curves: ["intcal20", "marine20"],
  marineMaterials: ["marine shell", "foraminifera"],
  materialMethods: { "marine shell": ["radiocarbon"], quartz: ["luminescence"], "plant macrofossil": ["radiocarbon"] },
  currentYear: 2025,
  // Invented region of interest, as REGION_OF_INTEREST configures it (the demo's box).
  regionOfInterest: { south: 55, north: 62, west: -75, east: -58 },
};

const c14 = (over: Record<string, unknown> = {}) => ({
  site_name: "Test Bay",
  latitude: "58.5",
  longitude: "-64.2",
  sample_code: "TB-1",
  material: "plant macrofossil",
  method: "radiocarbon",
  lab_code: "ZZT-1",
  constraint_kind: "minimum",
  c14_age: "9500",
  c14_error: "45",
  ...over,
});

const lum = (over: Record<string, unknown> = {}) => ({
  site_name: "Test Terrace",
  latitude: 57.1,
  longitude: -66.3,
  sample_code: "TT-L1",
  material: "quartz",
  method: "luminescence",
  lab_code: "ZZT-L1",
  constraint_kind: "minimum",
  de_gy: 20,
  de_error_gy: 1,
  dose_rate_gy_per_ka: 2,
  dose_rate_error_gy_per_ka: 0.1,
  measurement_year: 2020,
  ...over,
});

function messages(raw: Record<string, unknown>, c: RowContext = ctx) {
  const r = checkRow(raw, c);
  return r.issues.map((i) => `${i.column}: ${i.message}`);
}

function issueAt(raw: Record<string, unknown>, column: string, c: RowContext = ctx): string {
  const r = checkRow(raw, c);
  const found = r.issues.find((i) => i.column === column);
  if (!found) throw new Error(`no issue at ${column}; got ${JSON.stringify(r.issues)}`);
  return found.message;
}

describe("checkRow", () => {
  it("accepts a plain radiocarbon row and fills the defaults", () => {
    const r = checkRow(c14(), ctx);
    expect(r.ok).toBe(true);
    if (!r.ok) return;
    expect(r.value).toMatchObject({
      latitude: 58.5,
      c14_age: 9500,
      curve: "intcal20",
      age_normalised: true,
      greater_than: false,
    });
  });

  it("refuses the template's example rows as they are, and accepts them once they are one's own", () => {
    for (const row of EXAMPLE_ROWS) {
      const refused = checkRow(row, { ...ctx, materials: [...ctx.materials] });
      expect(refused.ok).toBe(false);
      expect(refused.issues.map((i) => i.column).sort()).toEqual(["doi", "lab_code"]);
      expect(refused.issues.find((i) => i.column === "lab_code")!.message).toMatch(/template's example row/);
      expect(String(row.notes)).toMatch(/^EXAMPLE ROW/);
      const own = { ...row, lab_code: `OWN-${String(row.lab_code)}`, doi: "" };
      expect(messages(own, { ...ctx, materials: [...ctx.materials] })).toEqual([]);
    }
  });

  it("accepts a luminescence row with a dose rate, and one with K/U/Th instead", () => {
    expect(checkRow(lum(), ctx).ok).toBe(true);
    const parts = lum({
      dose_rate_gy_per_ka: "",
      dose_rate_error_gy_per_ka: "",
      k_percent: 1.5,
      u_ppm: 1,
      th_ppm: 4,
      water_content: 0.1,
      burial_depth_m: 1.2,
      density_g_cm3: 1.8,
    });
    expect(messages(parts)).toEqual([]);
  });

  it("matches materials without regard to case and suggests the nearest", () => {
    const ok = checkRow(c14({ material: "Plant Macrofossil" }), ctx);
    expect(ok.ok && ok.value.material).toBe("plant macrofossil");
    expect(issueAt(c14({ material: "plant macrofosil" }), "material")).toContain('did you mean "plant macrofossil"');
    expect(issueAt(c14({ material: "granite" }), "material")).toContain("not in the list of materials");
  });

  it("says when the material is not dated by the method", () => {
    expect(issueAt(c14({ material: "quartz" }), "material")).toContain("dated by luminescence, not radiocarbon");
  });

  it("reports comma decimals, units, dates and ± in numeric columns, each with its own message", () => {
    expect(issueAt(c14({ c14_age: "10,5" }), "c14_age")).toContain("use a point as the decimal separator");
    expect(issueAt(c14({ c14_error: "45 yr" }), "c14_error")).toMatch(/takes a plain number in ¹⁴C yr.*leave the unit out/);
    expect(issueAt(c14({ c14_age: "12 ka" }), "c14_age")).toContain("12 ka is 12000 years");
    expect(issueAt(c14({ c14_age: "2021-03-04" }), "c14_age")).toContain("is a date");
    expect(issueAt(c14({ c14_age: new Date(Date.UTC(2021, 2, 4)) }), "c14_age")).toContain("holds a date");
    expect(issueAt(c14({ c14_age: "9500 ± 45" }), "c14_age")).toContain("error in the error column");
    expect(issueAt(c14({ c14_age: "1,234" }), "c14_age")).toBeTruthy();
    expect(issueAt(c14({ c14_age: "abc" }), "c14_age")).toContain("is not a number");
    expect(issueAt(c14({ latitude: "58°30'N" }), "latitude")).toContain("decimal degrees");
    expect(issueAt(lum({ measurement_year: "2019-05-03" }), "measurement_year")).toContain("year only");
    expect(issueAt(lum({ water_content: "15 %", dose_rate_gy_per_ka: 2 }), "water_content")).toContain("give a fraction");
  });

  it("refuses negative or zero errors", () => {
    expect(issueAt(c14({ c14_error: "-45" }), "c14_error")).toContain("must be greater than zero");
    expect(issueAt(c14({ c14_error: "0" }), "c14_error")).toContain("must be greater than zero");
    expect(issueAt(lum({ de_error_gy: -1 }), "de_error_gy")).toContain("must be greater than zero");
  });

  it("checks the coordinate ranges and recognises swapped coordinates", () => {
    expect(issueAt(c14({ latitude: "95" }), "latitude")).toContain("outside −90 to 90");
    expect(issueAt(c14({ longitude: "-190" }), "longitude")).toContain("outside −180 to 180");
    expect(issueAt(c14({ latitude: "-64.2", longitude: "58.5" }), "latitude")).toContain("look swapped");
  });

  it("gives the swapped-coordinates hint only where a region of interest is configured", () => {
    const r = checkRow(c14({ latitude: "-64.2", longitude: "58.5" }), { ...ctx, regionOfInterest: null });
    expect(r.ok).toBe(true);
    expect(r.issues).toEqual([]);
  });

  it("needs a measurement for each method", () => {
    expect(issueAt(c14({ c14_age: "", c14_error: "" }), "c14_age")).toContain("needs c14_age and c14_error");
    expect(checkRow(c14({ c14_age: "", c14_error: "", f14c: "0.3", f14c_error: "0.002" }), ctx).ok).toBe(true);
    expect(issueAt(c14({ c14_error: "" }), "c14_error")).toContain("Give the error");
    expect(issueAt(lum({ dose_rate_gy_per_ka: "", dose_rate_error_gy_per_ka: "" }), "dose_rate_gy_per_ka")).toContain("K, U, Th");
    expect(issueAt(lum({ dose_rate_gy_per_ka: "", dose_rate_error_gy_per_ka: "", k_percent: 1 }), "u_ppm")).toContain(
      "compute the dose rate",
    );
    expect(issueAt(lum({ measurement_year: "" }), "measurement_year")).toContain("year of measurement");
    expect(issueAt(lum({ measurement_year: 1800 }), "measurement_year")).toContain("between 1950");
  });

  it("requires a marine curve for marine material and warns on a missing ΔR", () => {
    expect(issueAt(c14({ material: "marine shell" }), "curve")).toContain("marine");
    expect(issueAt(c14({ material: "marine shell", curve: "intcal20" }), "curve")).toContain("rather than intcal20");
    const r = checkRow(c14({ material: "marine shell", curve: "Marine20" }), ctx);
    expect(r.ok).toBe(true);
    expect(r.warnings.map((w) => w.column)).toContain("delta_r");
    expect(issueAt(c14({ material: "marine shell", curve: "marine20", delta_r: "100" }), "delta_r_error")).toContain("together");
  });

  it("suggests the nearest curve and choice", () => {
    expect(issueAt(c14({ curve: "intcal2O" }), "curve")).toContain("did you mean intcal20");
    expect(issueAt(c14({ method: "radiocarbn" }), "method")).toContain("did you mean radiocarbon");
    expect(issueAt(c14({ constraint_kind: "min" }), "constraint_kind")).toContain("minimum, maximum or direct");
  });

  it("links a lab code already in the registry and reports calendar problems", () => {
    const c = { ...ctx, labCodeInRegistry: (code: string) => (code === "ZZT-1" ? 42 : null) };
    expect(issueAt(c14(), "lab_code", c)).toContain("/determinations/42");
    const c2 = { ...ctx, calendarProblem: () => ({ column: "c14_age", message: "beyond the curve" }) };
    expect(issueAt(c14(), "c14_age", c2)).toBe("beyond the curve");
  });

  it("reads yes/no cells and DOIs", () => {
    const r = checkRow(
      c14({ greater_than: "Yes", age_normalised: "no", d13c: "-25.3", doi: "https://doi.org/10.99999/x.1" }),
      ctx,
    );
    expect(r.ok && r.value).toMatchObject({ greater_than: true, age_normalised: false, doi: "10.99999/x.1" });
    expect(issueAt(c14({ greater_than: "maybe" }), "greater_than")).toContain("yes or no");
    expect(issueAt(c14({ doi: "not a doi" }), "doi")).toContain("not a DOI");
  });

  it("lists every missing required field at its own column", () => {
    const cols = checkRow({}, ctx).issues.map((i) => i.column);
    for (const c of ["site_name", "sample_code", "lab_code", "method", "constraint_kind", "material", "latitude", "longitude"]) {
      expect(cols).toContain(c);
    }
  });
});

describe("makeRowSchema", () => {
  it("puts each issue on its column path and returns the typed row", () => {
    const schema = makeRowSchema(ctx);
    const bad = schema.safeParse(c14({ c14_error: "0", latitude: "91" }));
    expect(bad.success).toBe(false);
    expect(bad.error?.issues.map((i) => i.path.join("."))).toEqual(expect.arrayContaining(["c14_error", "latitude"]));
    const good = schema.safeParse(c14());
    expect(good.success && good.data.lab_code).toBe("ZZT-1");
  });

  it("has exactly the template's column names as keys", () => {
    expect(Object.keys(makeRowSchema(ctx).in.shape).sort()).toEqual([...COLUMN_NAMES].sort());
  });
});

describe("nearest", () => {
  it("measures edit distance and refuses far-off names", () => {
    expect(levenshtein("kitten", "sitting")).toBe(3);
    expect(nearest("marin20", ["intcal20", "marine20"])).toBe("marine20");
    expect(nearest("zzzzzzzz", ["intcal20", "marine20"])).toBeNull();
  });
});

describe("values of the other method", () => {
  it("warns once per row, naming every column that does not belong to the row's method, without blocking it", () => {
    const r = checkRow(lum({ c14_age: "9500", d13c: "-25" }), ctx);
    expect(r.ok).toBe(true);
    const notStored = r.warnings.filter((w) => /not stored/.test(w.message));
    expect(notStored).toHaveLength(1);
    expect(notStored[0]!.message).toBe("2 columns are not used for a luminescence row and are not stored: c14_age, d13c.");
    const back = checkRow(c14({ de_gy: "20" }), ctx);
    expect(back.ok).toBe(true);
    expect(back.warnings.map((w) => w.column)).toContain("de_gy");
  });

  it("gives no such warning to a clean row", () => {
    expect(checkRow(c14(), ctx).warnings.filter((w) => /not stored/.test(w.message))).toEqual([]);
    expect(checkRow(lum(), ctx).warnings.filter((w) => /not stored/.test(w.message))).toEqual([]);
  });
});

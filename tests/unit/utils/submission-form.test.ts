import { describe, expect, it } from "vitest";
import { clientRowContext, makeSubmissionSchema, type FormOptions } from "#app/utils/submission-form.ts";
import { recordLink } from "#app/utils/record-link.ts";

const OPTIONS: Pick<FormOptions, "materials" | "curves"> = {
  materials: [
    { name: "plant macrofossil", methods: ["radiocarbon"], marine: false },
    { name: "marine shell", methods: ["radiocarbon"], marine: true },
    { name: "quartz", methods: ["luminescence"], marine: false },
  ],
  curves: [
    { name: "intcal20", displayName: "IntCal20", kind: "atmospheric" },
    { name: "marine20", displayName: "Marine20", kind: "marine" },
  ],
};

const GOOD = {
  site_choice: "new",
  site_name: "Unit Test Point",
  latitude: "58.1",
  longitude: "-64.2",
  sample_code: "U-1",
  material: "plant macrofossil",
  method: "radiocarbon",
  lab_code: "UT-1",
  lab_name: "Some Lab",
  constraint_kind: "minimum",
  c14_age: "9000",
  c14_error: "40",
};

const schema = makeSubmissionSchema(clientRowContext(OPTIONS));

function issues(input: Record<string, unknown>) {
  const r = schema.safeParse(input);
  return r.success ? {} : Object.fromEntries(r.error.issues.map((i) => [String(i.path[0]), i.message]));
}

describe("the form's schema", () => {
  it("yields the row and a new site", () => {
    const r = schema.safeParse(GOOD);
    expect(r.success).toBe(true);
    expect(r.data).toMatchObject({
      siteChoice: "new",
      siteId: null,
      row: { c14_age: 9000, curve: "intcal20", lab_name: "Some Lab" },
    });
  });

  it("takes a chosen site's id and reports a missing choice once, at the site list", () => {
    expect(schema.safeParse({ ...GOOD, site_choice: "existing", site_id: "12" }).data).toMatchObject({
      siteChoice: "existing",
      siteId: 12,
    });
    expect(issues({ ...GOOD, site_choice: "existing", site_id: "", site_name: "", latitude: "", longitude: "" })).toEqual({
      site_id: "Choose a site from the list, or enter a new site.",
    });
  });

  it("asks for the laboratory and keeps the row schema's messages at their fields", () => {
    const found = issues({ ...GOOD, lab_name: "", c14_error: "", material: "marine shell" });
    expect(Object.keys(found).sort()).toEqual(["c14_error", "curve", "lab_name"]);
  });

  it("runs the server's checks only on an otherwise valid form, at the fields they name", () => {
    const withServer = makeSubmissionSchema(clientRowContext(OPTIONS), () => [
      { column: "material", message: "recorded as wood" },
    ]);
    const r = withServer.safeParse(GOOD);
    expect(r.success).toBe(false);
    expect(r.error!.issues.map((i) => [i.path[0], i.message])).toEqual([["material", "recorded as wood"]]);
    let called = false;
    makeSubmissionSchema(clientRowContext(OPTIONS), () => ((called = true), [])).safeParse({ ...GOOD, c14_age: "" });
    expect(called).toBe(false);
  });
});

describe("recordLink", () => {
  it("finds the existing record's address in a duplicate message, with the text either side", () => {
    expect(recordLink("Lab code X-1 is already in the registry: /determinations/42")).toEqual({
      before: "Lab code X-1 is already in the registry: ",
      href: "/determinations/42",
      after: "",
    });
    expect(recordLink("Row 3: X-1 is /determinations/7 already.")).toEqual({
      before: "Row 3: X-1 is ",
      href: "/determinations/7",
      after: " already.",
    });
    expect(recordLink("Give the lab code.")).toBeNull();
  });
});

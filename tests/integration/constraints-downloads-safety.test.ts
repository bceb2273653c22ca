import Papa from "papaparse";
import { describe, expect, it } from "vitest";
import { seedForFile } from "#tests/support/test-db.ts";
import { getDb } from "#app/db/client.server.ts";
import { calibrateDeterminations } from "#app/models/calibration/calibrations.server.ts";
import { releaseResponse } from "#app/models/releases/release-download.server.ts";
import { publishRelease, releaseById } from "#app/models/releases/releases.server.ts";
import { selectConstraints, selectionResponse } from "#app/models/releases/selection-download.server.ts";
import { parseConstraintFilter, type ConstraintFilter } from "#app/utils/constraint-filter.ts";
import { createTestDetermination, createTestLab, createTestSample, createTestSite, createTestUser } from "#tests/factories.ts";

/*
 * Spreadsheet safety of every download of a constraint set and of a release. The set holds text a
 * spreadsheet would run as a formula (site, sample, lab and publication names beginning with
 * = + - @, a tab or a carriage return). CSV: every cell is opened and checked — text never begins
 * with one of those characters (it gets a leading ' ), numbers stay numbers. JSON and GeoJSON are
 * data for programs: they carry each value exactly as stored (a checksum covers them), are served
 * as JSON attachments that a browser must not sniff, and the hostile text cannot break their structure.
 */

const HOSTILE = ['=HYPERLINK("http://x","y")', "+1+1", "-2+3", "@SUM(A1:A9)", "\tTabbed", "\rReturned", '=1,2\n"quoted"'];
const DANGEROUS = /^[=+\-@\t\r]/;
const NUMBER = /^-?\d+(\.\d+)?(e-?\d+)?$/i;
const BOX = "bbox=-30.5,70.5,-29.5,71.5"; // only the hostile test sites lie here
let filter: ConstraintFilter;
let slug: string;
const ids: number[] = [];

seedForFile(() => {
  const db = getDb();
  const editor = createTestUser(db, ["editor"]);
  HOSTILE.forEach((text, i) => {
    const site = createTestSite(db, { name: `${text} site`, latitude: 71 + i * 0.01, longitude: -30 });
    const sample = createTestSample(db, { siteId: site.id, fieldCode: text, material: "plant macrofossil" });
    const lab = createTestLab(db, { name: `${text} lab` });
    const pub = db.$client
      .prepare("insert into publications (citation, doi) values (?, ?) returning id")
      .pluck()
      .get(`${text} et al. (2019)`, `10.9999/${i}${text}`) as number;
    const d = createTestDetermination(db, { sampleId: sample.id, labId: lab.id, labCode: `${text}-${i}`, publicationId: pub });
    ids.push(d.id);
  });
  calibrateDeterminations(db, ids);
  const parsed = parseConstraintFilter(new URLSearchParams(BOX));
  if (!parsed.ok) throw new Error(parsed.errors.join("; "));
  filter = parsed.filter;
  slug = publishRelease(db, {
    name: "Hostile text",
    version: "1",
    filter,
    userId: editor.id,
    baseUrl: "http://localhost/releases/",
  }).slug;
});

async function downloads(format: "csv" | "json" | "geojson"): Promise<{ label: string; response: Response }[]> {
  const db = getDb();
  const release = releaseById(db, db.$client.prepare("select id from releases where slug = ?").pluck().get(slug) as number)!;
  return [
    { label: `set ${format}`, response: selectionResponse(db, selectConstraints(db, filter), format) },
    { label: `release ${format}`, response: releaseResponse(db, release, format, `http://localhost/releases/${slug}`) },
    ...(format === "json"
      ? [
          {
            label: "set json+densities",
            response: selectionResponse(db, selectConstraints(db, filter), "json", { densities: true }),
          },
          { label: "release json+densities", response: releaseResponse(db, release, "json", "http://localhost/x", true) },
        ]
      : []),
  ];
}

/** Every string anywhere in a JSON value, with its path. */
function strings(value: unknown, path = "$", out: [string, string][] = []): [string, string][] {
  if (typeof value === "string") out.push([path, value]);
  else if (Array.isArray(value)) value.forEach((v, i) => strings(v, `${path}[${i}]`, out));
  else if (value && typeof value === "object") for (const [k, v] of Object.entries(value)) strings(v, `${path}.${k}`, out);
  return out;
}

describe("CSV downloads", () => {
  it("no cell of the set's or the release's CSV can run as a formula; numbers stay numbers", async () => {
    for (const { label, response } of await downloads("csv")) {
      expect(response.headers.get("Content-Type"), label).toMatch(/^text\/csv/);
      const parsed = Papa.parse<string[]>(await response.text(), { skipEmptyLines: true });
      expect(parsed.errors, label).toEqual([]);
      const [header, ...rows] = parsed.data;
      expect(rows, label).toHaveLength(HOSTILE.length);
      let cells = 0;
      for (const row of rows) {
        expect(row, label).toHaveLength(header!.length);
        for (const [c, cell] of row.entries()) {
          cells++;
          if (DANGEROUS.test(cell)) expect(cell, `${label} ${header![c]}`).toMatch(NUMBER);
        }
      }
      // The hostile text is there, behind a quote: nothing was dropped.
      const siteNames = rows.map((r) => r[header!.indexOf("site_name")]);
      for (const text of HOSTILE) expect(siteNames, label).toContain(`'${text} site`);
      const labCodes = rows.map((r) => r[header!.indexOf("lab_code")]);
      for (const text of HOSTILE)
        expect(
          labCodes.some((c) => c!.startsWith(`'${text}`)),
          label,
        ).toBe(true);
      expect(cells).toBeGreaterThan(HOSTILE.length * 30);
    }
  });
});

describe("JSON and GeoJSON downloads", () => {
  for (const format of ["json", "geojson"] as const) {
    it(`${format}: valid JSON attachments, not sniffable, carrying each value exactly as stored`, async () => {
      for (const { label, response } of await downloads(format)) {
        expect(response.headers.get("Content-Type"), label).toMatch(
          format === "json" ? /^application\/json/ : /^application\/geo\+json/,
        );
        expect(response.headers.get("X-Content-Type-Options"), label).toBe("nosniff");
        expect(response.headers.get("Content-Disposition"), label).toMatch(
          new RegExp(`^attachment; filename="[^"]+\\.${format}"$`),
        );
        const body = JSON.parse(await response.text());
        const items: Record<string, unknown>[] =
          format === "json" ? body.constraints : body.features.map((f: { properties: object }) => f.properties);
        expect(items, label).toHaveLength(HOSTILE.length);
        const all = strings(items);
        // Every hostile text survives exactly (never quoted or altered) and in the right field.
        for (const text of HOSTILE) {
          expect(
            all.some(([p, v]) => p.endsWith(".site_name") && v === `${text} site`),
            `${label} ${JSON.stringify(text)}`,
          ).toBe(true);
          expect(
            all.some(([p, v]) => p.endsWith(".sample_code") && v === text),
            label,
          ).toBe(true);
          expect(
            all.some(([p, v]) => p.endsWith(".lab") && v === `${text} lab`),
            label,
          ).toBe(true);
          expect(
            all.some(([p, v]) => p.endsWith(".publication.citation") && v === `${text} et al. (2019)`),
            label,
          ).toBe(true);
        }
        // Only the stored hostile values begin with a formula character; nothing else was invented.
        for (const [path, value] of all)
          if (DANGEROUS.test(value))
            expect(
              HOSTILE.some((h) => value.startsWith(h)),
              `${label} ${path}`,
            ).toBe(true);
      }
    });
  }
});

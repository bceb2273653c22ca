import { constraintExamples } from "#app/components/api-docs/constraint-examples.ts";
import { withCodes } from "#app/components/api-docs/with-codes.tsx";

const PARAMETERS: [string, React.ReactNode][] = [
  ["bbox", "W,S,E,N in degrees (west < east, south < north)"],
  ["polygon", "vertices lon,lat separated by ; (or POST a GeoJSON Polygon/MultiPolygon body to the same path)"],
  ["from_cal_bp, to_cal_bp", "time window in cal BP, either order"],
  ["time_mode", "overlap (default: the 95.4 % HPD range overlaps the window) or median (the median lies in it)"],
  ["methods", "comma list of radiocarbon, luminescence, exposure"],
  ["materials", "comma list of materials"],
  ["kinds", "comma list of minimum, maximum, direct"],
  ["min_grade", "0–3; ungraded determinations are left out when given"],
  ["exclude_flags", "comma list of flags; the latest review's flags count"],
  ["worst_check", "pass, note, warning or conflict: leave out determinations with a worse check"],
  [
    "curve",
    <>
      a curve by its name in uploads and the API: <code>intcal20</code> (IntCal20) or <code>marine20</code> (Marine20)
    </>,
  ],
  ["format", "json (default), csv, geojson, or metadata (the metadata file that goes with a CSV)"],
  [
    "densities",
    "true adds density {start_cal_bp, step, p} to each JSON item; p[i] is the probability of year start_cal_bp + i·step",
  ],
];

/** The constraints and releases part of /api-docs. */
export function ConstraintsApiSection({ base, releaseSlug }: { base: string; releaseSlug: string }) {
  return (
    <section id="constraints" className="mt-10 space-y-4" aria-labelledby="constraints-heading">
      <h2 id="constraints-heading">Constraint sets and releases</h2>
      <ul className="list-disc pl-6">
        <li>
          <code>GET /api/v1/constraints</code> (any token) — the selection with <code>filter</code>, <code>count</code>,{" "}
          <code>curves</code>, <code>exported_at</code>, <code>citations</code> and <code>constraints: [...]</code>; each item has{" "}
          <code>id</code>, <code>lab_code</code>, <code>latitude</code>, <code>longitude</code>, <code>method</code>,{" "}
          <code>constraint_kind</code>, <code>grade</code>, <code>median_cal_bp</code>, <code>hpd68</code>, <code>hpd95</code> and
          more. <code>POST</code> to the same path with a GeoJSON region. A malformed or unknown parameter is a 400 naming it:{" "}
          <code>{'{"error": "Malformed parameters.", "errors": ["min_grade: …"]}'}</code>.
        </li>
        <li>
          <code>GET /api/v1/releases</code> (public) — every release;{" "}
          <code>GET /api/v1/releases/{"{slug}"}?format=json|csv|geojson|metadata</code> (public) — the frozen items with{" "}
          <code>checksum</code> and <code>citation</code>, the same bytes every time.
        </li>
        <li>
          <code>POST /api/v1/releases</code> (editor token) with <code>{'{"name", "description", "filter", "version"?}'}</code>{" "}
          (the filter in the parameters above, as a JSON object; a region as <code>geometry</code>) → 201{" "}
          <code>{'{"slug", "checksum", "count"}'}</code>; 400 for an empty selection or a bad filter, 409 for a name and version
          already published.
        </li>
      </ul>
      <div className="overflow-x-auto">
        <table className="data-table text-sm">
          <thead>
            <tr>
              <th scope="col">Parameter</th>
              <th scope="col">Meaning</th>
            </tr>
          </thead>
          <tbody>
            {PARAMETERS.map(([name, meaning]) => (
              <tr key={name}>
                <td>
                  <code>{name}</code>
                </td>
                <td>{typeof meaning === "string" ? withCodes(meaning) : meaning}</td>
              </tr>
            ))}
          </tbody>
        </table>
      </div>
      <p>
        CSV is plain (one header row, one row per determination) so spreadsheets and <code>pandas.read_csv</code> read it without
        options; its metadata is the second file <code>format=metadata</code>, named by the CSV response&apos;s <code>Link</code>{" "}
        header. Text cells that begin with = + - @, a tab or a carriage return get a leading &apos;; numbers stay numbers.
      </p>
      <h3 id="release-checksum">How a release&apos;s checksum is computed</h3>
      <p>
        SHA-256 of the UTF-8 canonical JSON of the download&apos;s <code>constraints</code> ordered by <code>id</code> (each
        without its <code>density</code>
        ): keys sorted, no whitespace, integers without fraction, other numbers in plain decimal with the fewest digits that read
        back (items are frozen with fractions rounded to 6 decimals), strings escaped as JSON with other characters as themselves.
        The Python example below implements it.
      </p>
      <p>
        Examples: set <code>THAWLINE_URL={base}</code> and <code>THAWLINE_TOKEN</code> to a token from your account page. Each is
        run against the application by its tests.
      </p>
      {constraintExamples(releaseSlug).map((ex) => (
        <div key={ex.id}>
          <h3>{ex.title}</h3>
          <pre className="max-w-full overflow-x-auto rounded bg-ice-50 p-3 text-sm [overflow-wrap:normal]" data-example={ex.id}>
            <code>{ex.code}</code>
          </pre>
        </div>
      ))}
    </section>
  );
}

import { Link } from "react-router";
import type { Route } from "./+types/api-docs";
import { ConstraintsApiSection } from "#app/components/api-docs/constraints-section.tsx";
import { withCodes } from "#app/components/api-docs/with-codes.tsx";
import { ErrorView } from "#app/components/error-view.tsx";
import { listReleases } from "#app/models/releases/releases.server.ts";
import { getDb } from "#app/db/client.server.ts";
import { calibrateItems } from "#app/models/calibration/calibrate-items.server.ts";
import { API_DEFAULT_PER_PAGE, API_MAX_PER_PAGE } from "#app/models/registry/determinations-api.server.ts";
import { EXPLORE_PAGE_SIZE } from "#app/utils/explore-filters.ts";
import { COLUMNS } from "#app/utils/determination-input/columns.ts";
import { MAX_CALIBRATION_ITEMS } from "#app/utils/calibrate-input.ts";
import {
  CALIBRATE_RATE_LIMIT,
  CALIBRATE_WORK_BUDGET,
  DENSITY_VALUE_COST,
  ITEM_COST,
  MAX_REQUEST_WORK,
  MAX_SIGMA_YR,
} from "#app/utils/calibrate-limits.ts";
import { groupThousands } from "#app/science/calendar.ts";
import { env } from "#app/utils/env.server.ts";

export const meta: Route.MetaFunction = () => [{ title: "API · Thawline" }];

export async function loader({ request }: Route.LoaderArgs) {
  // Public page: documentation only. The calibration example is computed, so its numbers are real.
  let calibrated: unknown;
  try {
    calibrated = calibrateItems(getDb(), [{ id: "a1", c14_age: 10250, c14_error: 45, curve: "intcal20" }]);
  } catch {
    calibrated = null;
  }
  return {
    base: env().APP_URL ?? new URL(request.url).origin,
    uploadMaxMb: Math.round(env().UPLOAD_MAX_BYTES / 1024 / 1024),
    calibrated,
    perPage: { default: API_DEFAULT_PER_PAGE, max: API_MAX_PER_PAGE },
    releaseSlug: listReleases(getDb())[0]?.slug ?? "{slug}",
  };
}

const ENDPOINTS = [
  ["POST", "/api/v1/calibrate", "calibrate", "anyone"],
  ["GET", "/api/v1/me", "me", "any token"],
  ["GET", "/api/v1/determinations", "determinations-get", "any token"],
  ["GET", "/api/v1/determinations/{id}", "determination-get", "any token"],
  ["POST", "/api/v1/determinations", "determinations-post", "contributor token"],
  ["POST", "/api/v1/reviews", "reviews-post", "reviewer token"],
  ["POST", "/api/v1/uploads", "uploads", "contributor token"],
  ["POST", "/api/v1/uploads/{upload_id}/commit", "uploads-commit", "contributor token"],
  ["GET, POST", "/api/v1/constraints", "constraints", "any token"],
  ["GET", "/api/v1/releases, /api/v1/releases/{slug}", "constraints", "anyone"],
  ["POST", "/api/v1/releases", "constraints", "editor token"],
  ["POST", "/api/v1/model-runs", "model-runs-post", "modeller token"],
  ["GET", "/api/v1/model-runs/{id}", "model-runs-get", "modeller token"],
  ["GET", "/api/v1/ensembles/{name}", "ensembles-get", "modeller token"],
] as const;

function filterParameters(perPage: { default: number; max: number }): [string, string][] {
  return [
    ["method", "radiocarbon, luminescence or exposure"],
    ["material", "a material from the registry's list, e.g. marine shell"],
    ["lab", "a laboratory's id"],
    ["site", "part of a site name"],
    ["kind", "constraint kind: minimum, maximum or direct"],
    ["status", "submitted, in_review, graded, withdrawn or all (left out: everything but withdrawn)"],
    ["grade", "minimum grade 3, 2, 1 or 0, or ungraded"],
    ["worst_check", "the worst automatic check result: conflict, warning, note or pass"],
    ["c14From, c14To", "window on radiocarbon ages, ¹⁴C yr BP (radiocarbon dates only)"],
    [
      "lumFrom, lumTo",
      "window on luminescence ages, ka before measurement (luminescence dates only); given both windows, a date in either is returned",
    ],
    [
      "ageFrom, ageTo",
      "window on the measured age in years of either method (¹⁴C yr BP, or luminescence years); kept for older scripts",
    ],
    ["calFrom, calTo", "window on the calibrated median, cal BP"],
    ["q", "part of a lab code or site name"],
    ["sort", "labCode, site, age, cal, grade or created (default: created)"],
    ["dir", "asc or desc"],
    ["page", "page number from 1"],
    ["per_page", `rows per page, 1 to ${perPage.max} (default ${perPage.default})`],
  ];
}

export default function ApiDocs({ loaderData }: Route.ComponentProps) {
  const { base, uploadMaxMb, calibrated, perPage, releaseSlug } = loaderData;
  const overHttps = base.startsWith("https:");
  const calibrateExample = calibrated
    ? JSON.stringify(calibrated, null, 2)
    : `{"curves": {"intcal20": {"version": "…", "citation": "…"}},
 "results": [{"id": "a1", "median_cal_bp": …, "hpd68": [{"from": …, "to": …, "p": …}], "hpd95": […]}]}`;
  return (
    <div className="grid max-w-5xl grid-cols-1 gap-8 [overflow-wrap:anywhere]">
      <header>
        <p className="text-sm tracking-widest text-muted uppercase">For scripts</p>
        <h1 className="mt-1">The Thawline API</h1>
        <p className="mt-2 text-muted">
          JSON over {overHttps ? "HTTPS" : "HTTP"} at <code>{base}/api/v1/…</code>
          {overHttps
            ? null
            : " (this server answers over plain HTTP: on a shared network, put it behind HTTPS before sending tokens)"}
          . Field names are the upload template's column names throughout; measurements come back unrounded. Results are for
          research use; calibrated ages depend on the curve and its version, marine ages on ΔR, and grades are expert judgements,
          not measurements.
        </p>
      </header>

      <section className="card grid grid-cols-1 gap-3" aria-labelledby="auth-heading">
        <h2 id="auth-heading">Tokens</h2>
        <p>
          Every endpoint except calibration needs a personal API token, made on <Link to="/account">your account page</Link> and
          sent as a header. A token acts with your roles; revoke it there when you no longer need it.
        </p>
        <Code>{`curl -H "Authorization: Bearer <token>" ${base}/api/v1/me`}</Code>
        <p>
          Without a valid token the answer is <code>401</code> <code>{`{"error": "…"}`}</code>; with a token whose owner lacks the
          role, <code>403</code>. A wrong method is <code>405</code> with an <code>Allow</code> header.
        </p>
        <div className="overflow-x-auto">
          <table className="data-table">
            <thead>
              <tr>
                <th scope="col">Endpoint</th>
                <th scope="col">Who</th>
              </tr>
            </thead>
            <tbody>
              {ENDPOINTS.map(([method, path, anchor, who]) => (
                <tr key={anchor}>
                  <td>
                    <a href={`#${anchor}`}>
                      <code>
                        {method} {path}
                      </code>
                    </a>
                  </td>
                  <td>{who}</td>
                </tr>
              ))}
            </tbody>
          </table>
        </div>
      </section>

      <Endpoint
        id="calibrate"
        method="POST"
        path="/api/v1/calibrate"
        who="Anyone; no token. Rate-limited per address, by requests and by work (429 with Retry-After)."
      >
        <p>
          Calibrates ¹⁴C ages that need not be in the registry. Each item has an <code>id</code>, <code>c14_age</code> and{" "}
          <code>c14_error</code> (¹⁴C yr BP, 1σ), a <code>curve</code> (<code>intcal20</code> when left out) and, for a marine
          curve, <code>delta_r</code> and <code>delta_r_error</code>. <code>"density": true</code> adds each calendar density (
          <code>start_cal_bp</code> is its youngest year, one value per year). At most{" "}
          {MAX_CALIBRATION_ITEMS.toLocaleString("en")} items per request.
        </p>
        <Code>{`curl -s -X POST ${base}/api/v1/calibrate -H 'Content-Type: application/json' \\
  -d '{"determinations":[{"id":"a1","c14_age":10250,"c14_error":45,"curve":"intcal20"}]}'`}</Code>
        <Code label="200">{calibrateExample}</Code>
        <p>
          Ranges run from the oldest: <code>from</code> is the older bound, <code>to</code> the younger, in cal BP, with their
          probability <code>p</code>. An item that cannot be calibrated comes back as <code>{`{"id": …, "error": "…"}`}</code> in
          its place; a malformed request is <code>400</code> <code>{`{"error": "…"}`}</code>.
        </p>
        <p>
          The work of a request is counted before it is done: each item costs {groupThousands(ITEM_COST)} units plus one per
          calendar year its age spans on the curve (a wide error spans many), and a density {DENSITY_VALUE_COST} more per year. A
          request of more than {groupThousands(MAX_REQUEST_WORK)} units is <code>413</code> with the count, the limit (
          <code>work</code>, <code>limit</code>) and the widest items — {MAX_CALIBRATION_ITEMS.toLocaleString("en")} dates of
          ordinary error fit, about 1,500 with densities. An item whose <code>c14_error</code> or <code>delta_r_error</code> is
          over {groupThousands(MAX_SIGMA_YR)} years makes the request <code>400</code>, with every such item in{" "}
          <code>problems</code> (<code>index</code>, <code>field</code>, <code>message</code>). Each address may use{" "}
          {groupThousands(CALIBRATE_WORK_BUDGET.capacity)} units a minute, refilling steadily, besides{" "}
          {CALIBRATE_RATE_LIMIT.limit} requests a minute; past either the answer is <code>429</code> with <code>Retry-After</code>{" "}
          in seconds. Large answers are sent as they are written.
        </p>
      </Endpoint>

      <Endpoint id="me" method="GET" path="/api/v1/me" who="Any valid token.">
        <p>Who the token belongs to: a quick check that a script is set up.</p>
        <Code label="200">{`{"email": "someone@example.org", "roles": ["contributor", "modeller"]}`}</Code>
      </Endpoint>

      <Endpoint id="determinations-get" method="GET" path="/api/v1/determinations" who="Any valid token.">
        <p>
          The registry's determinations with their current calibration, filtered exactly as on <Link to="/explore">Explore</Link>,
          in the same order. All parameters are optional:
        </p>
        <div className="overflow-x-auto">
          <table className="data-table">
            <thead>
              <tr>
                <th scope="col">Parameter</th>
                <th scope="col">Meaning</th>
              </tr>
            </thead>
            <tbody>
              {filterParameters(perPage).map(([name, meaning]) => (
                <tr key={name}>
                  <td>
                    <code>{name}</code>
                  </td>
                  <td>{withCodes(meaning)}</td>
                </tr>
              ))}
            </tbody>
          </table>
        </div>
        <Code>{`curl -H "Authorization: Bearer <token>" \\
  "${base}/api/v1/determinations?method=radiocarbon&kind=minimum&grade=2&calFrom=8000&calTo=12000&per_page=200&page=1"`}</Code>
        <Code label="200">{`{
  "page": 1,
  "per_page": 200,
  "total": 1342,
  "determinations": [
    {
      "id": 812,
      "lab_code": "XMPL-0812",
      "lab": {"id": 3, "name": "…"},
      "site": {"id": 57, "name": "Example Cove", "latitude": 58.7123, "longitude": -64.3511, "elevation_m": 42},
      "sample_code": "EXC-01", "material": "marine shell", "depth_cm": 120, "strat_unit": "glaciomarine silt",
      "method": "radiocarbon", "constraint_kind": "minimum", "status": "graded", "grade": 3, "version": 2,
      "c14_age": 9850, "c14_error": 40, "f14c": null, "f14c_error": null, "d13c": 1.2,
      "age_normalised": true, "greater_than": false, "pretreatment": "acid etch",
      "curve": "marine20", "delta_r": 150, "delta_r_error": 60, "delta_r_curve": "marine20",
      "signal": null, "mineral": null, "de_gy": null, "de_error_gy": null,
      "dose_rate_gy_per_ka": null, "dose_rate_error_gy_per_ka": null,
      "measurement_year": null, "aliquots": null, "age_model": null,
      "doi": "10.99999/example.1",
      "publication": {"doi": "10.99999/example.1", "authors": "Example, A., Sample, B.", "year": 2024,
        "title": "An example publication", "journal": "Example Journal 1, 1–10",
        "citation": "Example, A., Sample, B. (2024) An example publication. Example Journal 1, 1–10."},
      "created_at": "2026-03-02T10:15:00.000Z", "updated_at": "2026-03-09T16:40:00.000Z",
      "calibration": {
        "curve": "Marine20 (2020), ΔR 150 ± 60",
        "median_cal_bp": 10437.2,
        "hpd68": [{"from": 10556, "to": 10305, "p": 0.684}],
        "hpd95": [{"from": 10678, "to": 10212, "p": 0.954}],
        "error": null
      }
    }
  ]
}`}</Code>
        <p>
          <code>publication</code> is <code>null</code> for an unpublished date; <code>citation</code> is written from the other
          fields, and a publication stored before citations were asked for has only its DOI (<code>title</code> <code>null</code>,{" "}
          <code>citation</code> “untitled — doi:…”). <code>doi</code> beside it is kept for older scripts.{" "}
          <code>calibration</code> is <code>null</code> before a determination is calibrated; a “greater than” age or a post-bomb
          sample has a calibration with <code>median_cal_bp</code> <code>null</code> and the reason in <code>error</code>.
          Luminescence ages have <code>"curve": "luminescence (normal)"</code>: a normal density on the calendar scale, no curve.
          A page past the end has an empty list. Every malformed parameter is named at once, with what it takes: <code>400</code>{" "}
          <code>{`{"errors": ["lumTo: give a luminescence age in ka, from 0 to 10,000 (got \\"-3\\")"]}`}</code>. Pages are read
          from Explore's pages of {EXPLORE_PAGE_SIZE}, so a large <code>per_page</code> costs a little more.
        </p>
      </Endpoint>

      <Endpoint id="determination-get" method="GET" path="/api/v1/determinations/{id}" who="Any valid token.">
        <p>
          One determination in exactly the shape of a list item above, plus every automatic check result and every review (newest
          first). A new grade shows here as soon as it is recorded. 404 <code>{`{"error"}`}</code> for an unknown id.
        </p>
        <Code>{`curl -s -H "Authorization: Bearer <token>" ${base}/api/v1/determinations/42`}</Code>
        <Code>{`{
  "id": 42, "lab_code": "KVX-1234", "grade": 2, "status": "graded", … (the list item's fields),
  "checks": [
    {"check": "reconstruction", "severity": "conflict",
     "message": "P(site still under ice at this age) = 0.97 by …", "details": {"pUnderIce": 0.97, …}},
    …
  ],
  "reviews": [{"grade": 2, "flags": ["bulk_sediment"], "comment": "Usable with care.", "created_at": "2026-…Z"}]
}`}</Code>
        <p>
          Checks are <code>value_range</code>, <code>marine</code>, <code>replicates</code>, <code>stratigraphy</code>,{" "}
          <code>neighbours</code>, <code>reconstruction</code> and <code>duplicates</code>; severities <code>pass</code>,{" "}
          <code>note</code>, <code>warning</code>, <code>conflict</code>.
        </p>
      </Endpoint>

      <Endpoint id="reviews-post" method="POST" path="/api/v1/reviews" who="A reviewer's token.">
        <p>
          {withCodes(
            "Grades one determination: grade 3 secure, 2 usable, 1 doubtful, 0 rejected; flags from young_carbon, old_carbon, " +
              "reworked, bulk_sediment, reservoir_uncertain, partial_bleaching, near_saturation, dose_rate_uncertain, " +
              "weak_stratigraphy, location_uncertain; an optional comment. Every review is kept; the determination shows the latest.",
          )}
        </p>
        <Code>{`curl -s -X POST ${base}/api/v1/reviews -H "Authorization: Bearer <token>" \\
  -H "Content-Type: application/json" \\
  -d '{"determination_id": 42, "grade": 2, "flags": ["bulk_sediment"], "comment": "Usable with care."}'`}</Code>
        <p>
          201 <code>{`{"id": 17}`}</code> (the review's id). 400 <code>{`{"errors":[{"field","message"}]}`}</code> naming the
          field for an unknown grade or flag or a malformed body; 403 when you submitted the determination yourself (nobody grades
          their own); 404 for an unknown determination; 409 when it was withdrawn or another reviewer has taken it in the queue.
        </p>
      </Endpoint>

      <Endpoint id="determinations-post" method="POST" path="/api/v1/determinations" who="A contributor's token.">
        <p>
          Submits determinations as a JSON array of rows whose keys are the template's column names (below), with the same checks
          as an upload. Either every row is valid and all are stored as one batch, or nothing is written. At most 10,000 rows and
          16 MB per request. A row citing a DOI the registry does not know carries the publication&apos;s citation once in the
          request (<code>pub_authors</code>, <code>pub_year</code>, <code>pub_title</code>, <code>pub_journal</code>, on any row
          with that DOI); otherwise it is refused at <code>doi</code>. A paper without a DOI is given by its citation alone.
        </p>
        <Code>{`curl -s -X POST ${base}/api/v1/determinations -H "Authorization: Bearer <token>" \\
  -H 'Content-Type: application/json' -d '[{
    "site_name": "Example Cove", "latitude": 58.7123, "longitude": -64.3511,
    "sample_code": "EXC-01", "material": "marine shell", "method": "radiocarbon",
    "lab_code": "XMPL-0812", "constraint_kind": "minimum",
    "c14_age": 9850, "c14_error": 40, "curve": "marine20", "delta_r": 150, "delta_r_error": 60
  }]'`}</Code>
        <Code label="201">{`{"determination_ids": [812], "warnings": []}`}</Code>
        <Code label="400">{`{"errors": [{"index": 0, "row": 1, "column": "c14_error", "message": "Give the error of c14_age (one standard deviation, in ¹⁴C years)."}], "warnings": []}`}</Code>
        <p>
          <code>index</code> counts from 0, <code>row</code> from 1. Too many rows or too large a body is <code>413</code>.{" "}
          <code>warnings</code> has the same shape and never blocks: an input the registry assumed (a dose-rate error left out,
          the internal K of a feldspar), a site in the southern hemisphere calibrated on a northern curve, an F¹⁴C near background
          stored as a limit.
        </p>
        <p>
          A luminescence row without <code>dose_rate_gy_per_ka</code> has its dose rate computed by the registry from K, U, Th,
          water content and burial depth with every term (beta attenuated by grain size and etching, gamma, alpha for fine grains
          with their <code>a_value</code>, Rb, the internal K and Rb of K-feldspar, cosmic scaled to the site or the lab&apos;s
          own) and the error propagated through each input. Give each input&apos;s 1σ in its <code>…_error…</code> column; one
          left out is assumed at the default the column table below states, and the determination says so.
        </p>
        <Code>{`curl -s -X POST ${base}/api/v1/determinations -H "Authorization: Bearer <token>" \\
  -H 'Content-Type: application/json' -d '[{
    "site_name": "Example Terrace", "latitude": 57.9402, "longitude": -66.1037, "elevation_m": 88,
    "sample_code": "EXT-L1", "material": "quartz", "method": "luminescence",
    "lab_code": "XMPL-L001", "constraint_kind": "minimum", "signal": "OSL", "mineral": "quartz",
    "de_gy": 18.2, "de_error_gy": 0.9, "measurement_year": 2023,
    "k_percent": 1.6, "k_error_percent": 0.05, "u_ppm": 1.2, "u_error_ppm": 0.1,
    "th_ppm": 4.5, "th_error_ppm": 0.3, "water_content": 0.15, "water_content_error": 0.05,
    "grain_size_um": 180, "etch_depth_um": 10,
    "burial_depth_m": 1.5, "burial_depth_error_m": 0.1, "density_g_cm3": 1.8, "density_error_g_cm3": 0.1
  }]'`}</Code>
      </Endpoint>

      <Endpoint id="uploads" method="POST" path="/api/v1/uploads" who="A contributor's token.">
        <p>
          Sends a spreadsheet (CSV or XLSX, up to {uploadMaxMb} MB, header row = the template's column names) as the multipart
          field <code>file</code>. It is read and checked; nothing reaches the registry until it is committed. Rows are numbered
          as a spreadsheet shows them (the header is row 1). The <a href="/uploads/template.csv">CSV template</a> and{" "}
          <a href="/uploads/template.xlsx">XLSX template</a> list the columns with an example row each.
        </p>
        <Code>{`curl -s -X POST ${base}/api/v1/uploads -H "Authorization: Bearer <token>" -F "file=@dates.csv"`}</Code>
        <Code label="200">{`{"upload_id": "q3V9…", "rows": 120, "valid": 118,
 "errors": [{"row": 14, "column": "latitude", "message": "Latitude 95 is outside −90 to 90."}],
 "warnings": [{"row": 20, "column": "internal_k_percent", "message": "K-feldspar: no internal K given; 12.5 ± 0.5 % (Huntley & Baril 1997) is assumed for the internal dose rate."}]}`}</Code>
        <p>
          A file that cannot be read, of the wrong kind or too large is answered with <code>400</code>, <code>413</code> or{" "}
          <code>415</code> and <code>{`{"error": "…"}`}</code>.
        </p>
      </Endpoint>

      <Endpoint
        id="uploads-commit"
        method="POST"
        path="/api/v1/uploads/{upload_id}/commit"
        who="A contributor's token; only your own uploads."
      >
        <p>
          Commits a checked upload in one transaction, with calibration: <code>{`{"mode": "all"}`}</code> only when every row is
          valid, <code>{`{"mode": "valid_only"}`}</code> to store the valid rows and leave the others out.
        </p>
        <Code>{`curl -s -X POST ${base}/api/v1/uploads/q3V9…/commit -H "Authorization: Bearer <token>" \\
  -H 'Content-Type: application/json' -d '{"mode":"valid_only"}'`}</Code>
        <Code label="200">{`{"committed": 118, "determination_ids": [901, 902, …]}`}</Code>
        <p>
          Mode <code>all</code> with any error, or an upload already committed, is <code>409</code> and writes nothing; someone
          else's upload is <code>404</code>; a body without a valid mode is <code>400</code>.
        </p>
      </Endpoint>

      <Endpoint id="model-runs-post" method="POST" path="/api/v1/model-runs" who="A modeller's token.">
        <p>
          Uploads one model run to be scored in the background. Multipart fields: <code>file</code> (NetCDF-4 or NetCDF-3 classic
          following the CF conventions, or GeoJSON margins with <code>age_cal_bp</code>), <code>name</code>, and optionally{" "}
          <code>ensemble</code>, <code>release</code> (a release slug; default: every determination graded 2 or 3),{" "}
          <code>parameters</code> (a JSON object), <code>time_offset</code> (cal BP of model time 0, needed when the time units do
          not say how they map to cal BP), <code>threshold</code> (m of ice, default 1) and <code>tolerance</code> (grid cells,
          default 1; km for margins, default 0).
        </p>
        <Code>{`curl -s -X POST ${base}/api/v1/model-runs -H "Authorization: Bearer <token>" \\
  -F "file=@run-017.nc" -F "name=run-017" -F "ensemble=sliding-sweep" -F 'parameters={"sliding_factor": 1.2}'`}</Code>
        <Code label="202">{`{"id": 41, "status": "queued"}`}</Code>
        <p>
          A bad file is <code>400</code> with <code>{`{"error": "…"}`}</code> naming what is missing or wrong (no time axis, no
          thickness or mask, an unknown projection, times that do not overlap the constraints); a file past the size limit is{" "}
          <code>413</code>. Nothing is kept for a refused file.
        </p>
      </Endpoint>

      <Endpoint id="model-runs-get" method="GET" path="/api/v1/model-runs/{id}" who="A modeller's token.">
        <p>
          A run's state and, once scored, its totals and per-constraint scores. <code>score</code> is the raw score in [0, 1] (the
          probability over the date's calendar density that the run is free of ice then; for direct dates the highest-density
          p-value at the run's deglaciation), before ε and the grade weight. <code>implausibility</code> is one-sided, in standard
          deviations.
        </p>
        <Code label="200">{`{"id": 41, "name": "run-017", "status": "scored", "error": null,
 "log_likelihood": -256.6, "n_constraints": 1184, "max_implausibility": 7.9,
 "scores": [{"determination_id": 12, "score": 0.97, "implausibility": 0, "model_deglaciation_cal_bp": 10450}]}`}</Code>
        <p>
          <code>status</code> is one of <code>queued</code>, <code>running</code>, <code>scored</code>, <code>failed</code> (then{" "}
          <code>error</code> says why). log L = Σ w·log(ε + (1 − ε)·score) with ε = 0.05 and weights 1 (grade 3), 0.75 (2), 0.25
          (1); rejected dates never count.
        </p>
      </Endpoint>

      <Endpoint id="ensembles-get" method="GET" path="/api/v1/ensembles/{name}" who="A modeller's token.">
        <p>The runs of an ensemble with their parameters and totals, ranked by log L (unscored runs last, without a rank).</p>
        <Code label="200">{`{"name": "sliding-sweep", "runs": [{"rank": 1, "id": 41, "name": "run-017", "status": "scored",
  "parameters": {"sliding_factor": 1.2}, "log_likelihood": -256.6, "n_constraints": 1184, "share_agreeing": 0.89,
  "max_implausibility": 7.9, "second_implausibility": 6.2, "ruled_out": false}]}`}</Code>
      </Endpoint>

      <section className="card grid grid-cols-1 gap-3" aria-labelledby="columns-heading">
        <h2 id="columns-heading">Column names</h2>
        <p>The names used by uploads, both determinations endpoints and the form.</p>
        <div className="overflow-x-auto">
          <table className="data-table">
            <thead>
              <tr>
                <th scope="col">Column</th>
                <th scope="col">Unit</th>
                <th scope="col">Meaning</th>
              </tr>
            </thead>
            <tbody>
              {COLUMNS.map((c) => (
                <tr key={c.name}>
                  <td>
                    <code>{c.name}</code>
                  </td>
                  <td>{c.unit || (c.choices ? c.choices.join(", ") : "")}</td>
                  <td>{withCodes(c.help)}</td>
                </tr>
              ))}
            </tbody>
          </table>
        </div>
      </section>
      <ConstraintsApiSection base={base} releaseSlug={releaseSlug} />
    </div>
  );
}

function Endpoint({
  id,
  method,
  path,
  who,
  children,
}: {
  id: string;
  method: string;
  path: string;
  who: string;
  children: React.ReactNode;
}) {
  return (
    <section id={id} className="card grid grid-cols-1 gap-3" aria-labelledby={`${id}-heading`}>
      <h2 id={`${id}-heading`} className="font-mono text-lg">
        {method} {path}
      </h2>
      <p className="text-sm text-muted">{who}</p>
      {children}
    </section>
  );
}

function Code({ label, children }: { label?: string; children: string }) {
  return (
    <div>
      {label ? <p className="text-sm font-semibold text-muted">Answer {label}</p> : null}
      <pre className="max-w-full overflow-x-auto rounded bg-ice-50 p-3 text-xs [overflow-wrap:normal]">{children}</pre>
    </div>
  );
}

export function ErrorBoundary({ error }: Route.ErrorBoundaryProps) {
  return <ErrorView error={error} />;
}

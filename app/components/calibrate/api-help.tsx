import { formatCount } from "#app/utils/age-format.ts";
import { MAX_CALIBRATION_ITEMS } from "#app/utils/calibrate-input.ts";

/** How to calibrate from a script: POST /api/v1/calibrate, its request and answer. */
export function ApiHelp() {
  return (
    <section aria-labelledby="api-heading" className="card max-w-4xl space-y-3 text-[15px]">
      <h2 id="api-heading">From a script</h2>
      <p>
        <code>POST /api/v1/calibrate</code> takes JSON and needs no sign-in. Each item has an <code>id</code>,{" "}
        <code>c14_age</code> and <code>c14_error</code> (¹⁴C yr BP, 1σ), a <code>curve</code> (<code>intcal20</code> when left
        out) and, for marine curves, <code>delta_r</code> and <code>delta_r_error</code>. Add <code>"density": true</code> for
        each calendar density (<code>start_cal_bp</code> is its youngest year, one value per year). Ranges run from the oldest;{" "}
        <code>from</code> is the older bound, <code>to</code> the younger, in cal BP. At most {formatCount(MAX_CALIBRATION_ITEMS)}{" "}
        items per request; requests are rate-limited per address. The full reference is on the <a href="/api-docs">API page</a>.
      </p>
      <pre className="overflow-x-auto rounded bg-ice-50 p-3 text-xs">{`curl -s -X POST https://<this server>/api/v1/calibrate \\
  -H 'Content-Type: application/json' \\
  -d '{"determinations":[
        {"id":"a1","c14_age":10250,"c14_error":45,"curve":"intcal20"},
        {"id":"m1","c14_age":9500,"c14_error":70,"curve":"marine20","delta_r":50,"delta_r_error":40}]}'

{"curves":{"intcal20":{"version":"2020","citation":"…"}, …},
 "results":[{"id":"a1","median_cal_bp":…,"hpd68":[{"from":…,"to":…,"p":0.683}],"hpd95":[…]},
            {"id":"m1", …}]}`}</pre>
      <p>
        An item that cannot be calibrated (a negative error, an unknown curve, an age beyond the curve) comes back as{" "}
        <code>{`{"id": …, "error": "…"}`}</code> in its place; a malformed request is a 400 with <code>{`{"error": "…"}`}</code>.
      </p>
    </section>
  );
}

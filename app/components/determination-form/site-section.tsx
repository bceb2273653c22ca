import { useState } from "react";
import { Link } from "react-router";
import { SiteCombobox, type ChosenSite } from "#app/components/site-combobox.tsx";
import { SiteLocationPicker } from "#app/components/site-location-picker.tsx";
import type { FormOptions } from "#app/utils/submission-form.ts";
import { FieldError, Radio, TextField, type Fields } from "./fields.tsx";

/** Where the sample was taken: a site already in the registry, or a new one placed by coordinates. */
export function SiteSection({
  f,
  siteArea,
  start,
}: {
  f: Fields;
  siteArea: FormOptions["siteArea"];
  start: (name: string) => string | undefined;
}) {
  const [siteChoice, setSiteChoice] = useState(start("site_choice") === "existing" ? "existing" : "new");
  // Kept here, not in the list below, so a site chosen before switching to "A new site" and back stays chosen.
  const [siteId, setSiteId] = useState(start("site_id") ?? "");
  return (
    <fieldset className="card grid gap-4">
      <legend className="px-1 text-lg font-semibold">Site</legend>
      <div role="radiogroup" aria-label="Where the sample was taken" className="flex flex-wrap gap-x-6 gap-y-2">
        <Radio name="site_choice" value="existing" checked={siteChoice === "existing"} onChange={setSiteChoice}>
          A site already in the registry
        </Radio>
        <Radio name="site_choice" value="new" checked={siteChoice === "new"} onChange={setSiteChoice}>
          A new site
        </Radio>
      </div>

      {siteChoice === "existing" ? (
        <ExistingSite f={f} siteArea={siteArea} start={start} siteId={siteId} onSiteId={setSiteId} />
      ) : null}

      <fieldset disabled={siteChoice !== "new"} hidden={siteChoice !== "new"} className="grid gap-4 sm:grid-cols-2">
        <TextField field={f.site_name!} column="site_name" className="sm:col-span-2" />
        <TextField field={f.latitude!} column="latitude" inputMode="decimal" placeholder="58.7123" />
        <TextField field={f.longitude!} column="longitude" inputMode="decimal" placeholder="-64.3511" />
        {siteChoice === "new" ? (
          <SiteLocationPicker siteArea={siteArea} latitudeId={f.latitude!.id} longitudeId={f.longitude!.id} />
        ) : null}
        <TextField field={f.elevation_m!} column="elevation_m" inputMode="decimal" />
        <TextField field={f.setting!} column="setting" />
        <p className="text-sm text-muted sm:col-span-2">
          A site of the same name within about 100 m of these coordinates is taken to be the same site.
        </p>
      </fieldset>
    </fieldset>
  );
}

/**
 * Choosing a site already in the registry: a searchable combobox over the server's site search (by
 * name, or nearest to a point typed or picked on the map); the chosen site's name and coordinates
 * are sent with its id.
 */
function ExistingSite({
  f,
  siteArea,
  start,
  siteId,
  onSiteId: setSiteId,
}: {
  f: Fields;
  siteArea: FormOptions["siteArea"];
  start: (name: string) => string | undefined;
  siteId: string;
  onSiteId: (id: string) => void;
}) {
  // The chosen site comes back with the form (an edit, or a post that failed) as its id, name and coordinates.
  const [chosen, setChosen] = useState<ChosenSite | null>(() => chosenFrom(siteId, start));
  const [showMap, setShowMap] = useState(false);
  const errorId = f.site_id!.errors?.length ? f.site_id!.errorId : undefined;
  return (
    <div className="grid gap-2">
      <div className="field">
        <SiteCombobox
          inputId={f.site_id!.id}
          label="Site"
          name="site_id"
          chosen={chosen}
          onChoose={(site) => {
            setChosen(site);
            setSiteId(site ? String(site.id) : "");
          }}
          invalid={!!errorId}
          describedBy={errorId}
          near={(searchNear) => (showMap ? <NearPointMap siteArea={siteArea} onPoint={searchNear} /> : null)}
        />
        {chosen ? (
          <p className="text-sm" data-testid="chosen-site">
            Chosen: <strong>{chosen.name}</strong>, {chosen.latitude.toFixed(4)}°, {chosen.longitude.toFixed(4)}°{" "}
            <Link to={`/sites/${chosen.id}`} target="_blank" rel="noopener">
              see the site
            </Link>
          </p>
        ) : null}
        <FieldError field={f.site_id!} />
      </div>
      <button
        type="button"
        className="btn-quiet justify-self-start text-sm"
        onClick={() => setShowMap((v) => !v)}
        aria-expanded={showMap}
      >
        {showMap ? "Hide the map" : "Pick near a point on the map"}
      </button>
      {chosen ? (
        <>
          <input type="hidden" name="site_name" value={chosen.name} />
          <input type="hidden" name="latitude" value={String(chosen.latitude)} />
          <input type="hidden" name="longitude" value={String(chosen.longitude)} />
        </>
      ) : null}
    </div>
  );
}

function chosenFrom(siteId: string, start: (name: string) => string | undefined): ChosenSite | null {
  const id = Number(siteId);
  const name = start("site_name");
  const latitude = Number(start("latitude"));
  const longitude = Number(start("longitude"));
  if (!siteId || !Number.isSafeInteger(id) || !name || !Number.isFinite(latitude) || !Number.isFinite(longitude)) return null;
  return { id, name, latitude, longitude };
}

/** A map whose clicked (or typed) point asks the combobox for the nearest sites; its inputs are not sent. */
function NearPointMap({ siteArea, onPoint }: { siteArea: FormOptions["siteArea"]; onPoint: (q: string) => void }) {
  const [lat, setLat] = useState("");
  const [lon, setLon] = useState("");
  const changed = (nextLat: string, nextLon: string) => {
    setLat(nextLat);
    setLon(nextLon);
    if (nextLat.trim() && nextLon.trim() && Number.isFinite(Number(nextLat)) && Number.isFinite(Number(nextLon))) {
      onPoint(`${nextLat.trim()}, ${nextLon.trim()}`);
    }
  };
  return (
    <div className="mt-2 grid gap-2 sm:grid-cols-2">
      <div className="field">
        <label htmlFor="near-latitude">Near latitude</label>
        <input
          id="near-latitude"
          className="input"
          inputMode="decimal"
          value={lat}
          onChange={(e) => changed(e.currentTarget.value, lon)}
        />
      </div>
      <div className="field">
        <label htmlFor="near-longitude">Near longitude</label>
        <input
          id="near-longitude"
          className="input"
          inputMode="decimal"
          value={lon}
          onChange={(e) => changed(lat, e.currentTarget.value)}
        />
      </div>
      <SiteLocationPicker siteArea={siteArea} latitudeId="near-latitude" longitudeId="near-longitude" />
    </div>
  );
}

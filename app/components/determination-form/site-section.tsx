import { getSelectProps } from "@conform-to/react";
import { useMemo, useState } from "react";
import { Link } from "react-router";
import { SiteLocationPicker } from "#app/components/site-location-picker.tsx";
import type { FormOptions } from "#app/utils/submission-form.ts";
import { FieldError, Radio, TextField, type Fields } from "./fields.tsx";

const SITES_LISTED = 300;

/** Where the sample was taken: a site already in the registry, or a new one placed by coordinates. */
export function SiteSection({
  f,
  sites,
  start,
}: {
  f: Fields;
  sites: FormOptions["sites"];
  start: (name: string) => string | undefined;
}) {
  const [siteChoice, setSiteChoice] = useState(start("site_choice") === "existing" ? "existing" : "new");
  // Kept here, not in the list below, so a site chosen before switching to "A new site" and back stays chosen.
  const [siteId, setSiteId] = useState(start("site_id") ?? "");
  const [siteFilter, setSiteFilter] = useState("");
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
        <ExistingSite f={f} sites={sites} siteId={siteId} onSiteId={setSiteId} filter={siteFilter} onFilter={setSiteFilter} />
      ) : null}

      <fieldset disabled={siteChoice !== "new"} hidden={siteChoice !== "new"} className="grid gap-4 sm:grid-cols-2">
        <TextField field={f.site_name!} column="site_name" className="sm:col-span-2" />
        <TextField field={f.latitude!} column="latitude" inputMode="decimal" placeholder="58.7123" />
        <TextField field={f.longitude!} column="longitude" inputMode="decimal" placeholder="-64.3511" />
        {siteChoice === "new" ? (
          <SiteLocationPicker sites={sites} latitudeId={f.latitude!.id} longitudeId={f.longitude!.id} />
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

/** Choosing a site already in the registry: filter by name, pick from the list; its name and coordinates are sent. */
function ExistingSite({
  f,
  sites,
  siteId,
  onSiteId: setSiteId,
  filter: siteFilter,
  onFilter: setSiteFilter,
}: {
  f: Fields;
  sites: FormOptions["sites"];
  siteId: string;
  onSiteId: (id: string) => void;
  filter: string;
  onFilter: (text: string) => void;
}) {
  const chosenSite = sites.find((s) => String(s.id) === siteId);
  const filteredSites = useMemo(() => {
    const q = siteFilter.trim().toLowerCase();
    const list = q ? sites.filter((s) => s.name.toLowerCase().includes(q)) : sites;
    // Keep the chosen site listed even when the filter would hide it.
    const shown = list.slice(0, SITES_LISTED);
    if (chosenSite && !shown.includes(chosenSite)) shown.unshift(chosenSite);
    return { shown, more: list.length - Math.min(list.length, SITES_LISTED) };
  }, [siteFilter, sites, chosenSite]);

  return (
    <div className="grid gap-2">
      <div className="field">
        <label htmlFor="site-filter">Find a site by name</label>
        <input
          id="site-filter"
          type="search"
          className="input"
          value={siteFilter}
          onChange={(e) => setSiteFilter(e.currentTarget.value)}
          aria-controls={f.site_id!.id}
          autoComplete="off"
          placeholder="Type part of the name"
        />
      </div>
      <div className="field">
        <label htmlFor={f.site_id!.id}>Site</label>
        <select
          {...getSelectProps(f.site_id!)}
          defaultValue={undefined}
          value={siteId}
          onChange={(e) => setSiteId(e.currentTarget.value)}
          size={Math.min(8, Math.max(3, filteredSites.shown.length + 1))}
          className="input"
        >
          <option value="">— choose a site —</option>
          {filteredSites.shown.map((s) => (
            <option key={s.id} value={s.id}>
              {s.name} ({s.latitude.toFixed(4)}°, {s.longitude.toFixed(4)}°)
            </option>
          ))}
        </select>
        {filteredSites.more > 0 ? (
          <p className="text-sm text-muted">{filteredSites.more} more; type part of the name to narrow the list.</p>
        ) : null}
        {sites.length === 0 ? <p className="text-sm text-muted">The registry has no sites yet; enter a new one.</p> : null}
        {chosenSite ? (
          <p className="text-sm" data-testid="chosen-site">
            Chosen: <strong>{chosenSite.name}</strong>, {chosenSite.latitude.toFixed(4)}°, {chosenSite.longitude.toFixed(4)}°{" "}
            <Link to={`/sites/${chosenSite.id}`} target="_blank" rel="noopener">
              see the site
            </Link>
          </p>
        ) : null}
        <FieldError field={f.site_id!} />
      </div>
      {chosenSite ? (
        <>
          <input type="hidden" name="site_name" value={chosenSite.name} />
          <input type="hidden" name="latitude" value={String(chosenSite.latitude)} />
          <input type="hidden" name="longitude" value={String(chosenSite.longitude)} />
        </>
      ) : null}
    </div>
  );
}

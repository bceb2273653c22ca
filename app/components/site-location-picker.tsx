import { useHydrated } from "#app/utils/use-hydrated.ts";
import { lazy, Suspense, useCallback, useEffect, useState } from "react";
import type { LatLon } from "#app/components/map/site-picker.client.tsx";
import type { SiteArea } from "#app/utils/submission-form.ts";

// Leaflet needs `window`: the map is a browser-only module loaded after hydration, as on the map page.
const SitePickerMap = lazy(() => import("#app/components/map/site-picker.client.tsx"));

/** Places kept in the inputs: five decimals is about a metre, finer than any field position. */
export function formatCoordinate(value: number): string {
  return String(Number(value.toFixed(5)));
}

/** A typed coordinate pair as a position, or null while either is missing or out of range. */
export function parsePosition(latText: string, lonText: string): LatLon | null {
  if (latText.trim() === "" || lonText.trim() === "") return null;
  const lat = Number(latText.trim());
  const lon = Number(lonText.trim());
  if (!Number.isFinite(lat) || !Number.isFinite(lon) || Math.abs(lat) > 90 || Math.abs(lon) > 180) return null;
  return { lat, lon };
}

function inputById(id: string): HTMLInputElement | null {
  const el = typeof document === "undefined" ? null : document.getElementById(id);
  return el instanceof HTMLInputElement ? el : null;
}

/** Sets an input as if it were typed, so the form's validation and live preview see the change. */
function typeInto(input: HTMLInputElement, value: string) {
  Object.getOwnPropertyDescriptor(HTMLInputElement.prototype, "value")?.set?.call(input, value);
  input.dispatchEvent(new Event("input", { bubbles: true }));
  input.dispatchEvent(new Event("change", { bubbles: true }));
}

/**
 * A small map under a new site's latitude and longitude inputs: a click (or Enter on the focused
 * map) fills them, typing in them moves the marker. The inputs stay the form's fields, so the form
 * works the same without JavaScript.
 */
export function SiteLocationPicker({
  siteArea,
  latitudeId,
  longitudeId,
}: {
  siteArea: SiteArea | null;
  latitudeId: string;
  longitudeId: string;
}) {
  const hydrated = useHydrated();
  const [position, setPosition] = useState<LatLon | null>(null);

  useEffect(() => {
    const lat = inputById(latitudeId);
    const lon = inputById(longitudeId);
    if (!lat || !lon) return;
    const read = () => setPosition(parsePosition(lat.value, lon.value));
    read();
    lat.addEventListener("input", read);
    lon.addEventListener("input", read);
    return () => {
      lat.removeEventListener("input", read);
      lon.removeEventListener("input", read);
    };
  }, [latitudeId, longitudeId]);

  const onPick = useCallback(
    (at: LatLon) => {
      const lat = inputById(latitudeId);
      const lon = inputById(longitudeId);
      if (!lat || !lon) return;
      typeInto(lat, formatCoordinate(at.lat));
      typeInto(lon, formatCoordinate(at.lon));
    },
    [latitudeId, longitudeId],
  );

  const helpId = `${latitudeId}-picker-help`;
  return (
    <div className="grid gap-2 sm:col-span-2">
      {hydrated ? (
        <Suspense fallback={<PickerPlaceholder text="Loading the map…" />}>
          <SitePickerMap
            siteArea={siteArea}
            position={position}
            onPick={onPick}
            label="Map for placing the new site"
            describedBy={helpId}
          />
        </Suspense>
      ) : (
        <PickerPlaceholder text="With JavaScript a map appears here to place the site; typed coordinates work as well." />
      )}
      <p id={helpId} className="text-sm text-muted">
        Click the map to place the site, or type its coordinates; the marker follows them. Faint dots are sites already in the
        registry (point at one for its name). On the keyboard: focus the map, move with the arrow keys, zoom with + and −, and
        press Enter to place the site under the cross.
      </p>
    </div>
  );
}

function PickerPlaceholder({ text }: { text: string }) {
  return (
    <div className="flex h-72 items-center justify-center rounded-md border border-rule bg-ice-50 px-4 text-center text-sm text-muted">
      {text}
    </div>
  );
}

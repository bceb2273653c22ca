// Browser-only: Leaflet touches `window` when it loads. The `.client` suffix keeps this module out of
// the server build; the determination form loads it with React.lazy after hydration.
import { useEffect, useRef, useState } from "react";
import L from "leaflet";
import { MapContainer, useMap, useMapEvents } from "react-leaflet";
import { textLabel } from "./text-label.client.ts";
import { Basemap, FALLBACK_BOUNDS, SEA_COLOUR } from "./basemap.client.tsx";
import type { SiteArea } from "#app/utils/submission-form.ts";

export type LatLon = { lat: number; lon: number };
type PickerSite = { id: number; name: string; latitude: number; longitude: number };

export type SitePickerMapProps = {
  /** How many sites the registry has and where: the map opens on them, and asks for those in view. */
  siteArea: SiteArea | null;
  /** The coordinates in the form's inputs, if they are a valid position. */
  position: LatLon | null;
  /** A place chosen on the map (by click, or Enter at the map's centre). */
  onPick: (position: LatLon) => void;
  /** An accessible name for the map's keyboard focus. */
  label: string;
  describedBy?: string;
};

/** The registry's sites in the map's view, asked of the site search whenever the view settles (at most SITES_IN_VIEW_LIMIT). */
function RegistrySites({ onMore }: { onMore: (more: boolean) => void }) {
  const map = useMap();
  const [sites, setSites] = useState<PickerSite[]>([]);
  useEffect(() => {
    let controller: AbortController | null = null;
    const load = () => {
      controller?.abort();
      controller = new AbortController();
      const b = map.getBounds();
      const box = [b.getSouth(), b.getWest(), b.getNorth(), b.getEast()].map((v) => v.toFixed(4)).join(",");
      fetch(`/api/site-search?bbox=${box}`, { signal: controller.signal, headers: { Accept: "application/json" } })
        .then((r) => (r.ok ? (r.json() as Promise<{ sites: PickerSite[]; more: boolean }>) : null))
        .then((answer) => {
          if (!answer) return;
          setSites(answer.sites);
          onMore(answer.more);
        })
        .catch(() => {
          // A view left before its answer came (aborted), or the server unreachable: the dots stay as they were.
        });
    };
    load();
    map.on("moveend", load);
    return () => {
      map.off("moveend", load);
      controller?.abort();
    };
  }, [map, onMore]);
  useEffect(() => {
    // The map's one canvas (preferCanvas), drawn after the land, so the dots lie on top of it.
    const group = L.layerGroup();
    for (const site of sites) {
      L.circleMarker([site.latitude, site.longitude], {
        radius: 3,
        color: "#5b6975",
        weight: 0.6,
        opacity: 0.7,
        fillColor: "#8bbad6",
        fillOpacity: 0.45,
      })
        .bindTooltip(() => textLabel(site.name), { direction: "top", offset: [0, -3] })
        .addTo(group);
    }
    group.addTo(map);
    return () => {
      group.remove();
    };
  }, [map, sites]);
  return null;
}

function ChosenPosition({ position }: { position: LatLon | null }) {
  const map = useMap();
  const markerRef = useRef<L.CircleMarker | null>(null);
  useEffect(() => {
    // An SVG marker: Leaflet stacks SVG above canvas, so the registry's dots never hide it.
    const marker = L.circleMarker([0, 0], {
      renderer: L.svg(),
      className: "site-picker-chosen",
      radius: 7,
      color: "#0a4f56",
      weight: 2.5,
      fillColor: "#0f6f78",
      fillOpacity: 0.85,
      interactive: false,
    });
    markerRef.current = marker;
    return () => {
      marker.remove();
      markerRef.current = null;
    };
  }, [map]);
  useEffect(() => {
    const marker = markerRef.current;
    if (!marker) return;
    if (!position) {
      marker.remove();
      return;
    }
    const at = L.latLng(position.lat, position.lon);
    marker.setLatLng(at).addTo(map);
    // Typed coordinates outside the view bring the view to them; a click inside it leaves the view alone.
    if (!map.getBounds().contains(at)) map.panTo(at, { animate: false });
  }, [map, position]);
  return null;
}

function PickHandler({ onPick, onFocusChange }: { onPick: (p: LatLon) => void; onFocusChange: (focused: boolean) => void }) {
  const map = useMapEvents({
    click(e) {
      // From the pointer itself: a click on a registry site's dot must not snap to that site.
      const at = map.mouseEventToLatLng(e.originalEvent).wrap();
      onPick({ lat: at.lat, lon: at.lng });
    },
    keydown(e) {
      const event = e.originalEvent;
      // Only the map itself: Enter on the zoom buttons zooms, it does not place the site.
      if (event.key !== "Enter" || event.target !== map.getContainer()) return;
      event.preventDefault();
      const at = map.getCenter().wrap();
      onPick({ lat: at.lat, lon: at.lng });
    },
  });
  useEffect(() => {
    const container = map.getContainer();
    const focus = () => onFocusChange(true);
    const blur = () => onFocusChange(false);
    container.addEventListener("focus", focus);
    container.addEventListener("blur", blur);
    return () => {
      container.removeEventListener("focus", focus);
      container.removeEventListener("blur", blur);
    };
  }, [map, onFocusChange]);
  return null;
}

function AccessibleContainer({ label, describedBy }: { label: string; describedBy?: string }) {
  const map = useMap();
  useEffect(() => {
    const container = map.getContainer();
    container.setAttribute("role", "application");
    container.setAttribute("aria-label", label);
    if (describedBy) container.setAttribute("aria-describedby", describedBy);
  }, [map, label, describedBy]);
  return null;
}

export default function SitePickerMap({ siteArea, position, onPick, label, describedBy }: SitePickerMapProps) {
  const [focused, setFocused] = useState(false);
  const [more, setMore] = useState(false);
  // Fitted once, when the map opens: to the box around the registry's sites and the position already typed.
  const [initialBounds] = useState<L.LatLngBoundsExpression>(() => {
    const points: [number, number][] = siteArea
      ? [
          [siteArea.south, siteArea.west],
          [siteArea.north, siteArea.east],
        ]
      : [];
    if (position) points.push([position.lat, position.lon]);
    if (points.length === 0) return FALLBACK_BOUNDS;
    const bounds = L.latLngBounds(points);
    if (bounds.getNorthEast().equals(bounds.getSouthWest())) return bounds.getCenter().toBounds(50_000);
    return bounds.pad(0.08);
  });

  return (
    <div className="relative" data-testid="site-picker-map">
      <MapContainer
        bounds={initialBounds}
        preferCanvas
        attributionControl={false}
        className="h-72 w-full cursor-crosshair rounded-md border border-rule"
        style={{ background: SEA_COLOUR }}
        worldCopyJump={false}
        keyboard
      >
        <Basemap />
        <RegistrySites onMore={setMore} />
        <ChosenPosition position={position} />
        <PickHandler onPick={onPick} onFocusChange={setFocused} />
        <AccessibleContainer label={label} describedBy={describedBy} />
      </MapContainer>
      {focused ? (
        // The keyboard's aim: Enter places the site under this cross.
        <svg
          aria-hidden="true"
          width="28"
          height="28"
          viewBox="0 0 28 28"
          className="pointer-events-none absolute top-1/2 left-1/2 z-[1000] -translate-x-1/2 -translate-y-1/2"
        >
          <path d="M14 2v9M14 17v9M2 14h9M17 14h9" stroke="#0f273b" strokeWidth="2" strokeLinecap="round" />
        </svg>
      ) : null}
      {more ? (
        <p className="pointer-events-none absolute right-2 bottom-2 z-[1000] rounded bg-white/85 px-2 py-0.5 text-xs text-ink">
          Only some of the sites here are drawn: zoom in to see each one.
        </p>
      ) : null}
    </div>
  );
}

// Browser-only: Leaflet touches `window` when it loads. The `.client` suffix keeps this module
// (and Leaflet with it) out of the server build; the map route loads it with React.lazy after hydration.
import { useEffect, useMemo, useRef } from "react";
import L from "leaflet";
import { MapContainer, useMap } from "react-leaflet";
import { useNavigate } from "react-router";
import type { Feature, FeatureCollection } from "geojson";
import { textLabel } from "./text-label.client.ts";
import { Basemap, FALLBACK_BOUNDS, SEA_COLOUR } from "./basemap.client.tsx";
import { ageColourScale, siteMark } from "#app/utils/map-colours.ts";
import { gradeWord } from "#app/utils/labels.ts";
import { formatYears } from "#app/utils/age-format.ts";
import type { MapSite } from "#app/utils/map-site.ts";

export type ClientMapSite = MapSite;

export type SiteMapProps = {
  sites: ClientMapSite[];
  isochrones: Feature[] | null;
  showIsochrones: boolean;
  colourBy: "age" | "grade";
  /** Slider time in cal BP: sites dated older are ice-free (coloured), younger still under ice (small grey dots). */
  time: number | null;
  /** The isochrone age nearest the slider, highlighted. */
  highlightAge: number | null;
  ageDomain: [number, number];
  onReady: (markerCount: number) => void;
  /**
   * Popups link to the site page (signed-in pages). A public map (a release's) sets false: its
   * popups then say everything themselves, with the site's position, and link nowhere.
   */
  linkSites?: boolean;
};

function escapeHtml(s: string): string {
  return s.replace(/[&<>"']/g, (c) => ({ "&": "&amp;", "<": "&lt;", ">": "&gt;", '"': "&quot;", "'": "&#39;" })[c]!);
}

const degrees = (v: number, pos: string, neg: string) => `${Math.abs(v).toFixed(3)}° ${v >= 0 ? pos : neg}`;

function popupHtml(s: ClientMapSite, linkSites: boolean): string {
  const age = s.med != null ? `${formatYears(s.med)} cal BP (median of deglaciation dates)` : "no age yet";
  const grade = s.grade != null ? `best grade ${s.grade} ${gradeWord(s.grade)}` : "ungraded";
  const more = linkSites
    ? `<a href="/sites/${s.id}" data-site-link>Open the site page</a>`
    : `<p style="margin:0">${degrees(s.lat, "N", "S")}, ${degrees(s.lon, "E", "W")} · site ${s.id} in the downloads (site_id)</p>`;
  return `<div class="font-serif">
    <p style="margin:0;font-weight:600;font-size:15px">${escapeHtml(s.name)}</p>
    <p style="margin:2px 0 0">${s.n.toLocaleString("en")} determination${s.n === 1 ? "" : "s"} · ${age}</p>
    <p style="margin:2px 0 6px">${grade}</p>
    ${more}
  </div>`;
}

function Isochrones({
  features,
  visible,
  highlightAge,
  colour,
}: {
  features: Feature[];
  visible: boolean;
  highlightAge: number | null;
  colour: (age: number) => string;
}) {
  const map = useMap();
  const layerRef = useRef<L.GeoJSON | null>(null);

  useEffect(() => {
    const layer = L.geoJSON({ type: "FeatureCollection", features } as FeatureCollection, { interactive: false });
    layerRef.current = layer;
    return () => {
      layer.remove();
      layerRef.current = null;
    };
  }, [features]);

  useEffect(() => {
    const layer = layerRef.current;
    if (!layer) return;
    if (!visible) {
      layer.remove();
      return;
    }
    if (!map.hasLayer(layer)) layer.addTo(map);
    layer.setStyle((f) => {
      const age = Number(f?.properties?.age_cal_bp);
      const isHighlight = highlightAge != null && age === highlightAge;
      const polygonal = f?.geometry.type === "Polygon" || f?.geometry.type === "MultiPolygon";
      return isHighlight
        ? { color: "#0f6f78", weight: 3.5, opacity: 1, fill: polygonal, fillColor: "#dcebf4", fillOpacity: 0.45 }
        : { color: colour(age), weight: 1.2, opacity: 0.8, fill: false };
    });
    layer.eachLayer((l) => {
      const f = (l as L.Path & { feature?: Feature }).feature;
      if (highlightAge != null && Number(f?.properties?.age_cal_bp) === highlightAge) (l as L.Path).bringToFront();
    });
  }, [map, visible, highlightAge, colour, features]);
  return null;
}

function SiteMarkers({
  sites,
  styleFor,
  onReady,
  linkSites,
}: {
  sites: ClientMapSite[];
  styleFor: (s: ClientMapSite) => L.CircleMarkerOptions;
  onReady: (n: number) => void;
  linkSites: boolean;
}) {
  const map = useMap();
  const navigate = useNavigate();
  const markersRef = useRef<{ site: ClientMapSite; marker: L.CircleMarker }[]>([]);
  const styleRef = useRef(styleFor);
  useEffect(() => {
    styleRef.current = styleFor;
  });

  // Popups are Leaflet's HTML, outside React, and Leaflet stops their clicks from bubbling: follow
  // the site link inside the app (no full reload) unless the person asked for a new tab or window.
  useEffect(() => {
    const onOpen = (e: L.PopupEvent) => {
      const link = e.popup.getElement()?.querySelector<HTMLAnchorElement>("a[data-site-link]");
      if (!link || link.dataset.bound) return;
      link.dataset.bound = "1";
      link.addEventListener("click", (ev) => {
        if (ev.button !== 0 || ev.metaKey || ev.ctrlKey || ev.shiftKey || ev.altKey) return;
        ev.preventDefault();
        navigate(link.getAttribute("href")!);
      });
    };
    map.on("popupopen", onOpen);
    return () => {
      map.off("popupopen", onOpen);
    };
  }, [map, navigate]);

  useEffect(() => {
    const renderer = L.canvas({ padding: 0.5 });
    const group = L.layerGroup();
    markersRef.current = sites.map((site) => {
      const marker = L.circleMarker([site.lat, site.lon], { renderer, ...styleRef.current(site) });
      marker.bindPopup(() => popupHtml(site, linkSites));
      marker.bindTooltip(() => textLabel(site.name), { direction: "top", offset: [0, -4] });
      group.addLayer(marker);
      return { site, marker };
    });
    group.addTo(map);
    if (sites.length > 0) {
      const bounds = L.latLngBounds(sites.map((s) => [s.lat, s.lon] as [number, number]));
      map.fitBounds(bounds.pad(0.08), { animate: false, maxZoom: 10 });
    }
    onReady(sites.length);
    return () => {
      group.remove();
      markersRef.current = [];
    };
    // eslint-disable-next-line react-hooks/exhaustive-deps -- onReady is a notification; a new callback identity must not rebuild thousands of markers
  }, [map, sites, linkSites]);

  useEffect(() => {
    for (const { site, marker } of markersRef.current) marker.setStyle(styleFor(site));
  }, [styleFor]);
  return null;
}

export default function SiteMap(props: SiteMapProps) {
  const { sites, isochrones, showIsochrones, colourBy, time, highlightAge, ageDomain, onReady, linkSites = true } = props;
  const ageScale = useMemo(() => ageColourScale(ageDomain[0], ageDomain[1]), [ageDomain]);
  const colour = useMemo(() => (age: number) => ageScale(age), [ageScale]);

  const styleFor = useMemo(
    () =>
      (s: ClientMapSite): L.CircleMarkerOptions => {
        const { style } = siteMark(s, colourBy, time, (age) => ageScale(age));
        return { ...style, dashArray: style.dashArray ?? undefined };
      },
    [colourBy, time, ageScale],
  );

  const initialBounds = useMemo<L.LatLngBoundsExpression>(() => {
    if (sites.length === 0) return FALLBACK_BOUNDS;
    return L.latLngBounds(sites.map((s) => [s.lat, s.lon] as [number, number])).pad(0.08);
  }, [sites]);

  return (
    <MapContainer
      bounds={initialBounds}
      preferCanvas
      attributionControl={false}
      className="h-[68vh] min-h-[420px] w-full rounded-md border border-rule"
      style={{ background: SEA_COLOUR }}
      worldCopyJump={false}
      keyboard
    >
      <Basemap />
      {isochrones ? (
        <Isochrones features={isochrones} visible={showIsochrones} highlightAge={highlightAge} colour={colour} />
      ) : null}
      <SiteMarkers sites={sites} styleFor={styleFor} onReady={onReady} linkSites={linkSites} />
    </MapContainer>
  );
}

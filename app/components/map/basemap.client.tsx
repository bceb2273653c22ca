// Browser-only (Leaflet touches `window` when it loads): the offline basemap every Thawline map
// draws under its own layers. Coastlines come from world-atlas, served as static files with the
// app (no tile server), fetched only when a map opens, and at the detail the zoom needs: the
// 1:110m land for a continent-wide view, the 1:50m land once a region fills the map.
import "leaflet/dist/leaflet.css";
import { useEffect, useState } from "react";
import L from "leaflet";
import { useMap, useMapEvents } from "react-leaflet";
import { feature } from "topojson-client";
import type { FeatureCollection } from "geojson";
import type { GeometryCollection, Topology } from "topojson-specification";
import land110Url from "world-atlas/land-110m.json?url";
import land50Url from "world-atlas/land-50m.json?url";

/** The sea: the map container's background, behind the land polygons. */
export const SEA_COLOUR = "#e6eef3";

/** The view shown before any site is known: the demo region around the former ice margin. */
export const FALLBACK_BOUNDS: L.LatLngBoundsExpression = [
  [50, -80],
  [62, -55],
];

/** Below this zoom the coarse land is indistinguishable from the detailed one at screen resolution. */
const DETAIL_FROM_ZOOM = 4;
const LAND_PANE = "thawline-land";

type Detail = "110m" | "50m";
const URLS: Record<Detail, string> = { "110m": land110Url, "50m": land50Url };
const cache = new Map<Detail, Promise<FeatureCollection>>();

/** Fetches and decodes one land file once per page; both maps on a page share it. */
export function loadLand(detail: Detail): Promise<FeatureCollection> {
  let pending = cache.get(detail);
  if (!pending) {
    pending = fetch(URLS[detail])
      .then((r) => {
        if (!r.ok) throw new Error(`land ${detail}: HTTP ${r.status}`);
        return r.json() as Promise<Topology<{ land: GeometryCollection }>>;
      })
      .then((topo) => {
        const land = feature(topo, topo.objects.land);
        return (land.type === "FeatureCollection" ? land : { type: "FeatureCollection", features: [land] }) as FeatureCollection;
      });
    pending.catch(() => cache.delete(detail));
    cache.set(detail, pending);
  }
  return pending;
}

export function detailForZoom(zoom: number): Detail {
  return zoom >= DETAIL_FROM_ZOOM ? "50m" : "110m";
}

/**
 * Land drawn as one non-interactive layer in its own pane below every overlay, so sites drawn
 * before the land has arrived stay on top of it. Place it inside a MapContainer.
 */
export function Basemap() {
  const map = useMap();
  const [detail, setDetail] = useState<Detail>(() => detailForZoom(map.getZoom()));
  useMapEvents({ zoomend: () => setDetail(detailForZoom(map.getZoom())) });

  useEffect(() => {
    if (!map.getPane(LAND_PANE)) {
      const pane = map.createPane(LAND_PANE);
      pane.style.zIndex = "250"; // above tiles (200), below overlays (400)
      pane.style.pointerEvents = "none";
    }
    let layer: L.GeoJSON | null = null;
    let cancelled = false;
    loadLand(detail)
      .then((land) => {
        if (cancelled) return;
        // Each polygon takes its path options (the land pane's own canvas) from the layer's options.
        const options: L.GeoJSONOptions & L.PathOptions = {
          pane: LAND_PANE,
          interactive: false,
          renderer: L.canvas({ pane: LAND_PANE }),
          style: { fillColor: "#f4f1ea", fillOpacity: 1, color: "#9aa8b3", weight: 0.7 },
        };
        layer = L.geoJSON(land, options).addTo(map);
      })
      .catch(() => {
        // The sea colour alone still shows the sites; the coastline is a backdrop, not data.
      });
    return () => {
      cancelled = true;
      layer?.remove();
    };
  }, [map, detail]);
  return null;
}

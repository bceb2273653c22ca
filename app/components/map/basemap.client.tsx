// Browser-only (Leaflet touches `window` when it loads): the offline basemap every Thawline map
// draws under its own layers. Coastlines come from world-atlas, bundled, so no tile server is used.
import "leaflet/dist/leaflet.css";
import { useEffect } from "react";
import L from "leaflet";
import { useMap } from "react-leaflet";
import { feature } from "topojson-client";
import type { FeatureCollection } from "geojson";
import type { GeometryCollection, Topology } from "topojson-specification";
import landTopology from "world-atlas/land-50m.json";

/** The sea: the map container's background, behind the land polygons. */
export const SEA_COLOUR = "#e6eef3";

/** The view shown before any site is known: the demo region around the former ice margin. */
export const FALLBACK_BOUNDS: L.LatLngBoundsExpression = [
  [50, -80],
  [62, -55],
];

const LAND: FeatureCollection = (() => {
  const topo = landTopology as unknown as Topology<{ land: GeometryCollection }>;
  const land = feature(topo, topo.objects.land);
  return (land.type === "FeatureCollection" ? land : { type: "FeatureCollection", features: [land] }) as FeatureCollection;
})();

/** Land drawn as one non-interactive GeoJSON layer; place it first inside a MapContainer. */
export function Basemap() {
  const map = useMap();
  useEffect(() => {
    const layer = L.geoJSON(LAND, {
      interactive: false,
      style: { fillColor: "#f4f1ea", fillOpacity: 1, color: "#9aa8b3", weight: 0.7 },
    }).addTo(map);
    return () => {
      layer.remove();
    };
  }, [map]);
  return null;
}

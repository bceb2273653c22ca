// Browser-only (Leaflet): the selection's sites, and a region the modeller draws by clicking
// vertices. The polygon closes itself; "Clear region" in the page empties it.
import { useEffect } from "react";
import L from "leaflet";
import { MapContainer, useMap } from "react-leaflet";
import { Basemap, FALLBACK_BOUNDS, SEA_COLOUR } from "./basemap.client.tsx";
import { gradeColour } from "#app/utils/map-colours.ts";
import type { MapSite } from "#app/utils/map-site.ts";

type Props = {
  sites: MapSite[];
  polygon: [number, number][];
  bbox: [number, number, number, number] | null;
  onAddVertex: (lonLat: [number, number]) => void;
};

function Layers({ sites, polygon, bbox, onAddVertex }: Props) {
  const map = useMap();
  useEffect(() => {
    const group = L.layerGroup().addTo(map);
    for (const s of sites) {
      L.circleMarker([s.lat, s.lon], {
        radius: 4,
        weight: 1,
        color: "#173a56",
        fillColor: gradeColour(s.grade),
        fillOpacity: 0.9,
      })
        .bindTooltip(`${s.name}: ${s.n} selected`)
        .addTo(group);
    }
    if (polygon.length >= 2) {
      L.polygon(
        polygon.map(([lon, lat]) => [lat, lon] as L.LatLngTuple),
        { color: "#173a56", weight: 2, fillOpacity: 0.08, dashArray: polygon.length < 3 ? "4 4" : undefined },
      ).addTo(group);
    }
    for (const [lon, lat] of polygon) L.circleMarker([lat, lon], { radius: 3, color: "#173a56", fillOpacity: 1 }).addTo(group);
    if (bbox) {
      L.rectangle(
        [
          [bbox[1], bbox[0]],
          [bbox[3], bbox[2]],
        ],
        { color: "#3a7fab", weight: 1.5, fill: false, dashArray: "6 3" },
      ).addTo(group);
    }
    return () => {
      group.remove();
    };
  }, [map, sites, polygon, bbox]);
  useEffect(() => {
    const onClick = (e: L.LeafletMouseEvent) =>
      onAddVertex([Math.round(e.latlng.lng * 1e4) / 1e4, Math.round(e.latlng.lat * 1e4) / 1e4]);
    map.on("click", onClick);
    return () => {
      map.off("click", onClick);
    };
  }, [map, onAddVertex]);
  return null;
}

export default function RegionMap(props: Props) {
  return (
    <MapContainer
      bounds={FALLBACK_BOUNDS}
      style={{ height: 420, background: SEA_COLOUR, cursor: "crosshair" }}
      className="rounded border border-ice-200"
      data-testid="region-map"
      attributionControl={false}
    >
      <Basemap />
      <Layers {...props} />
    </MapContainer>
  );
}

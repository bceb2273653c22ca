// Browser-only (Leaflet): a scored model run on the map. The run's ice at the time chosen on the
// page's slider as a filled outline, and over it the constraints' sites coloured by their score
// on one hue (pale = agrees, deep = disagrees). Labels are set as text, never as HTML.
import { useEffect, useMemo } from "react";
import L from "leaflet";
import { MapContainer, useMap } from "react-leaflet";
import { Basemap, FALLBACK_BOUNDS, SEA_COLOUR } from "./basemap.client.tsx";
import { textLabel } from "./text-label.client.ts";
import { scoreColour, type RunMapSite } from "#app/utils/run-map.ts";

type Props = {
  sites: RunMapSite[];
  /** The ice at the chosen time: MultiPolygon coordinates in lon/lat; null while loading. */
  ice: number[][][][] | null;
  iceLabel: string;
};

const ICE_STYLE: L.PathOptions = { color: "#3a7fab", weight: 1.5, fillColor: "#bcd7ea", fillOpacity: 0.55 };

function Ice({ ice, iceLabel }: Pick<Props, "ice" | "iceLabel">) {
  const map = useMap();
  useEffect(() => {
    if (!ice?.length) return;
    const layer = L.geoJSON({ type: "MultiPolygon", coordinates: ice } as GeoJSON.MultiPolygon, {
      style: ICE_STYLE,
      interactive: true,
    })
      .bindTooltip(textLabel(iceLabel), { sticky: true })
      .addTo(map);
    layer.bringToBack();
    return () => {
      layer.remove();
    };
  }, [map, ice, iceLabel]);
  return null;
}

function Sites({ sites }: Pick<Props, "sites">) {
  const map = useMap();
  useEffect(() => {
    const group = L.featureGroup().addTo(map);
    for (const s of sites) {
      L.circleMarker([s.lat, s.lon], {
        radius: 5,
        weight: s.nImplausible ? 2.5 : 1,
        color: "#1c1a17",
        fillColor: scoreColour(s.meanScore),
        fillOpacity: 0.95,
      })
        .bindTooltip(
          textLabel(
            `${s.name}: ${s.n} constraint${s.n === 1 ? "" : "s"}, mean score ${s.meanScore.toFixed(2)}, lowest ${s.minScore.toFixed(2)}` +
              (s.nImplausible ? `, ${s.nImplausible} with implausibility above 3` : ""),
          ),
        )
        .addTo(group);
    }
    if (sites.length) map.fitBounds(group.getBounds(), { padding: [24, 24], maxZoom: 8 });
    return () => {
      group.remove();
    };
  }, [map, sites]);
  return null;
}

export default function RunMap({ sites, ice, iceLabel }: Props) {
  const stable = useMemo(() => sites, [sites]);
  return (
    <MapContainer
      bounds={FALLBACK_BOUNDS}
      style={{ height: 460, background: SEA_COLOUR }}
      className="rounded border border-ice-200"
      data-testid="run-map"
      attributionControl={false}
    >
      <Basemap />
      <Ice ice={ice} iceLabel={iceLabel} />
      <Sites sites={stable} />
    </MapContainer>
  );
}

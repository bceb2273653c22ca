// Browser-only (Leaflet): the small map of the review page. The determination's site in the middle
// (a teal ring) with the neighbours check's radius drawn round it; each neighbour a disc on the ice
// hue by its median age (pale = young, deep = old), maximum-limiting dates with a heavier ring.
// Labels are text nodes (textLabel), never HTML: lab codes and site names come from contributors.
import { useEffect, useMemo } from "react";
import L from "leaflet";
import { MapContainer, useMap } from "react-leaflet";
import { Basemap, SEA_COLOUR } from "./basemap.client.tsx";
import { textLabel } from "./text-label.client.ts";
import { ageColourScale, NO_VALUE_MARK } from "#app/utils/map-colours.ts";

export type NeighbourMark = {
  id: number;
  labCode: string;
  latitude: number;
  longitude: number;
  medianCalBp: number | null;
  maximum: boolean;
  /** The tooltip's text: lab code, age, kind, grade, distance. */
  label: string;
};

type Props = {
  centre: { latitude: number; longitude: number; label: string };
  radiusKm: number;
  neighbours: NeighbourMark[];
  ageDomain: [number, number];
  onOpen: (id: number) => void;
};

function Layers({ centre, radiusKm, neighbours, ageDomain, onOpen }: Props) {
  const map = useMap();
  const colour = useMemo(() => ageColourScale(ageDomain[0], ageDomain[1]), [ageDomain]);
  useEffect(() => {
    const group = L.layerGroup().addTo(map);
    const circle = L.circle([centre.latitude, centre.longitude], {
      radius: radiusKm * 1000,
      color: "#1f4e72",
      weight: 1,
      dashArray: "4 4",
      fill: false,
      interactive: false,
    }).addTo(group);
    for (const n of neighbours) {
      const style =
        n.medianCalBp == null
          ? { ...NO_VALUE_MARK, dashArray: NO_VALUE_MARK.dashArray ?? undefined }
          : {
              radius: 6,
              color: "#0f273b",
              weight: n.maximum ? 3 : 1,
              fillColor: colour(n.medianCalBp),
              fillOpacity: 0.95,
              opacity: 1,
            };
      L.circleMarker([n.latitude, n.longitude], style)
        .bindTooltip(textLabel(n.label), { direction: "top", offset: [0, -6] })
        .on("click", () => onOpen(n.id))
        .addTo(group);
    }
    // The determination under review: a ring on top of everything.
    L.circleMarker([centre.latitude, centre.longitude], {
      radius: 10,
      color: "#0f6f78",
      weight: 2.5,
      fill: false,
    })
      .bindTooltip(textLabel(centre.label), { direction: "top", offset: [0, -8], permanent: true })
      .addTo(group);
    map.fitBounds(circle.getBounds().pad(0.05), { animate: false });
    return () => {
      group.remove();
    };
  }, [map, centre, radiusKm, neighbours, colour, onOpen]);
  return null;
}

export default function NeighbourMap(props: Props) {
  const bounds = useMemo<L.LatLngBoundsExpression>(() => {
    const d = props.radiusKm / 111;
    return [
      [props.centre.latitude - d, props.centre.longitude - d * 2],
      [props.centre.latitude + d, props.centre.longitude + d * 2],
    ];
  }, [props.centre, props.radiusKm]);
  return (
    <MapContainer
      bounds={bounds}
      attributionControl={false}
      className="h-[340px] w-full rounded border border-rule"
      style={{ background: SEA_COLOUR }}
      data-testid="neighbour-map"
      keyboard
    >
      <Basemap />
      <Layers {...props} />
    </MapContainer>
  );
}

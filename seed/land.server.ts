// Loads the world-atlas land polygons (a file read, hence .server) for the demo generator.
import { createRequire } from "node:module";
import type { FeatureCollection } from "geojson";
import { feature } from "topojson-client";
import type { GeometryCollection, Topology } from "topojson-specification";

const require = createRequire(import.meta.url);

const cache = new Map<string, FeatureCollection>();

export function loadLand(resolution: "50m" | "110m" = "50m"): FeatureCollection {
  let land = cache.get(resolution);
  if (!land) {
    const topology = require(`world-atlas/land-${resolution}.json`) as Topology<{ land: GeometryCollection }>;
    land = feature(topology, topology.objects.land) as FeatureCollection;
    cache.set(resolution, land);
  }
  return land;
}

// Streaming GeoJSON (RFC 7946) FeatureCollections of points. Client-safe.
import { textStream } from "#app/utils/text-stream.ts";

export type PointFeatureInput = {
  id: number | string;
  longitude: number;
  latitude: number;
  properties: Record<string, unknown>;
};

/** One Point Feature; coordinates are [longitude, latitude] as RFC 7946 requires. */
export function pointFeature(p: PointFeatureInput): object {
  return {
    type: "Feature",
    id: p.id,
    geometry: { type: "Point", coordinates: [p.longitude, p.latitude] },
    properties: p.properties,
  };
}

/**
 * A FeatureCollection written piece by piece. `metadata` travels as a foreign member of the
 * collection (RFC 7946 §6.1), which GeoJSON readers keep or ignore without failing.
 */
export function* geojsonPieces(metadata: Record<string, unknown>, points: Iterable<PointFeatureInput>): Generator<string> {
  yield `{"type":"FeatureCollection","metadata":${JSON.stringify(metadata)},"features":[`;
  let first = true;
  for (const p of points) {
    yield (first ? "\n" : ",\n") + JSON.stringify(pointFeature(p));
    first = false;
  }
  yield "\n]}\n";
}

export function geojsonStream(metadata: Record<string, unknown>, points: Iterable<PointFeatureInput>) {
  return textStream(geojsonPieces(metadata, points));
}

import { scaleLinear } from "d3-scale";

// The run page's map (client-safe): what it shows per site and the score colours.

/** A site's constraints in one scored run. */
export interface RunMapSite {
  id: number;
  name: string;
  lat: number;
  lon: number;
  n: number;
  meanScore: number;
  minScore: number;
  nImplausible: number;
}

/**
 * Scores on one hue (a rust brown, apart from the ice's blue): 1 = agrees, pale; 0 = disagrees,
 * deep, so the constraints a run fails stand out. Stops from score 0 to 1.
 */
export const SCORE_STOPS = ["#6b2a0c", "#c8692c", "#fbe9d8"] as const;

const scale = scaleLinear<string>()
  .domain([0, 0.5, 1])
  .range([...SCORE_STOPS])
  .clamp(true);

export function scoreColour(score: number): string {
  return scale(score);
}

/** One site as the map draws it; sent by the map data route, read by the browser-only map. */
export type MapSite = {
  id: number;
  name: string;
  lat: number;
  lon: number;
  /** Determinations at the site (not withdrawn). */
  n: number;
  /** Youngest and median deglaciation age in years BP (cal BP where calibrated); null when none. */
  min: number | null;
  med: number | null;
  /** Best reliability grade at the site; null when none is graded. */
  grade: number | null;
};

// The one error a model-run file can raise: a code for programs and a message for people.

export type ModelRunFileErrorCode =
  | "not-netcdf"
  | "no-time-axis"
  | "time-mapping-needed"
  | "no-ice-variable"
  | "no-coordinates"
  | "unknown-projection"
  | "bad-shape"
  | "no-overlap"
  | "too-large"
  | "bad-geojson";

export class ModelRunFileError extends Error {
  constructor(
    readonly code: ModelRunFileErrorCode,
    message: string,
    /** time-mapping-needed: the axis's units and raw range, for the page's time-mapping step. */
    readonly timeAxis?: { units: string; first: number; last: number; n: number },
  ) {
    super(message);
    this.name = "ModelRunFileError";
  }
}

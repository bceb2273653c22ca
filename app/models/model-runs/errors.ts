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
  ) {
    super(message);
    this.name = "ModelRunFileError";
  }
}

// Shapes of the public calibration API (POST /api/v1/calibrate), shared by the API, the models
// and the calibration page. Client-safe. The page's own reading of what people type or paste is
// in utils/calibrate-sheet.ts.

export const MAX_CALIBRATION_ITEMS = 10_000;

/** One item of `POST /api/v1/calibrate`. */
export type CalibrationItem = {
  id: string;
  c14_age: number;
  c14_error: number;
  curve: string;
  delta_r?: number;
  delta_r_error?: number;
};

export type ApiRange = { from: number; to: number; p: number };
export type ApiDensity = { start_cal_bp: number; step: 1; values: number[] };
export type ApiResult =
  | { id: string | number; median_cal_bp: number; hpd68: ApiRange[]; hpd95: ApiRange[]; density?: ApiDensity }
  | { id: string | number | null; error: string };
export type ApiResponse = { curves: Record<string, { version: string; citation: string }>; results: ApiResult[] };

export function isCalibrated(r: ApiResult): r is Extract<ApiResult, { median_cal_bp: number }> {
  return "median_cal_bp" in r;
}

import { action } from "#app/routes/api/v1/calibrate.ts";

/*
 * The public calibration API called as the router would, from its own client address each time
 * (so its per-address limits never couple tests), and a run of radiocarbon dates to send it.
 */

let counter = 0;

export function postCalibrate(body: unknown, address = `198.51.100.${++counter}`): Promise<Response> {
  const request = new Request("http://localhost/api/v1/calibrate", {
    method: "POST",
    headers: { "Content-Type": "application/json", "X-Thawline-Client": address },
    body: JSON.stringify(body),
  });
  return action({ request, params: {}, context: {} } as never) as Promise<Response>;
}

/** `n` dates spread over 3,000–12,000 ¹⁴C yr BP, each with this error. */
export const calibrationDates = (n: number, error: number) =>
  Array.from({ length: n }, (_, i) => ({ id: `d${i}`, c14_age: 3000 + ((i * 37) % 9000), c14_error: error }));

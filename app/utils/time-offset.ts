import { z } from "zod";

/** The run page's time-mapping step (client-safe, shared by the form and its action). */
export const TimeOffsetSchema = z.object({
  time_offset: z
    .number({ error: "Give the cal BP age of model time 0 as a number, e.g. 21000." })
    .min(-100_000, "That is far in the future; give cal BP (years before AD 1950).")
    .max(5_000_000, "That is older than Thawline's calendar reaches; give cal BP."),
  whole_ensemble: z.boolean().default(false),
});

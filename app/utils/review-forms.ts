// The review forms' schemas, client-safe so the page validates as the reviewer types and the
// server (page, bulk form in the queue, token API) validates with the very same rules.

import { z } from "zod";
import { FLAGS } from "#app/db/schema.ts";

/** What a reviewer sets; the review page, the bulk form and the API share it. */
export const gradeSchema = z.object({
  grade: z.coerce
    .number({ message: "Choose a grade: 3 secure, 2 usable, 1 doubtful or 0 rejected." })
    .int({ message: "The grade must be 0, 1, 2 or 3." })
    .min(0, { message: "The grade must be 0, 1, 2 or 3." })
    .max(3, { message: "The grade must be 0, 1, 2 or 3." }),
  flags: z.array(z.enum(FLAGS, { message: `Unknown flag; use one of ${FLAGS.join(", ")}.` })).default([]),
  comment: z.string().trim().max(4000, { message: "Keep the comment under 4,000 characters." }).optional(),
});
export type GradeInput = z.infer<typeof gradeSchema>;

export const questionSchema = z.object({
  question: z
    .string({ message: "Write the question." })
    .trim()
    .min(5, { message: "Write the question (a sentence or two)." })
    .max(4000, { message: "Keep the question under 4,000 characters." }),
});
export const answerSchema = z.object({
  answer: z
    .string({ message: "Write your answer." })
    .trim()
    .min(2, { message: "Write your answer." })
    .max(4000, { message: "Keep the answer under 4,000 characters." }),
});

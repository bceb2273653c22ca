import { z } from "zod";
import { parseConstraintFilter } from "#app/utils/constraint-filter.ts";

// The /constraints page's save and publish forms (client-safe, shared by the forms and the action).

/** The filter the form carries (the page's query string), checked as the API checks it. */
const filterField = z
  .string()
  .default("")
  .superRefine((query, ctx) => {
    const parsed = parseConstraintFilter(new URLSearchParams(query));
    if (!parsed.ok) ctx.addIssue({ code: "custom", message: `The filter cannot be used: ${parsed.errors.join("; ")}.` });
  });

export const SaveSetSchema = z.object({
  name: z
    .string({ error: "Give the set a name, so you can find it again." })
    .trim()
    .min(1, "Give the set a name, so you can find it again.")
    .max(120, "Keep the name to 120 characters."),
  filter: filterField,
});

export const PublishSchema = z.object({
  name: z
    .string({ error: "Give the release a name; it is part of its citation." })
    .trim()
    .min(1, "Give the release a name; it is part of its citation.")
    .max(200, "Keep the name to 200 characters."),
  version: z.string().trim().max(40, "Keep the version to 40 characters, e.g. 2 or 2026.1.").optional(),
  description: z.string().trim().max(2000, "Keep the description to 2,000 characters.").optional(),
  filter: filterField,
});

import { z } from "zod";
import { checkRow } from "#app/utils/determination-input/check-row.ts";
import { COLUMNS } from "#app/utils/determination-input/columns.ts";
import type { DeterminationRow, RowContext } from "#app/utils/determination-input/row.ts";

/**
 * The row schema for Conform and the API: an object whose keys are the column names, validated
 * as a whole by `checkRow` so every message lands on its own field.
 */
export function makeRowSchema(ctx: RowContext) {
  const shape = Object.fromEntries(COLUMNS.map((c) => [c.name, z.unknown().optional()])) as Record<
    string,
    z.ZodOptional<z.ZodUnknown>
  >;
  return z.object(shape).transform((raw, zctx): DeterminationRow => {
    const result = checkRow(raw, ctx);
    if (!result.ok) {
      for (const issue of result.issues) {
        zctx.addIssue({ code: "custom", path: [issue.column], message: issue.message, input: raw[issue.column] });
      }
      return z.NEVER;
    }
    return result.value;
  });
}

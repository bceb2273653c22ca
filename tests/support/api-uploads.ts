// Uploads through the token API, for tests that commit them: a contributor with a token, a sheet
// of valid rows uploaded (every row valid, or the test stops here), and the registry's size.
import { expect } from "vitest";
import { getDb } from "#app/db/client.server.ts";
import { createToken } from "#app/models/accounts/tokens.server.ts";
import * as uploadsApi from "#app/routes/api/v1/uploads.ts";
import { createTestUser } from "#tests/factories.ts";
import { args, ORIGIN, run } from "#tests/support/auth.ts";
import { toCsvText, uploadRows } from "#tests/support/upload-files.ts";

export const determinationCount = () => getDb().$client.prepare("select count(*) from determinations").pluck().get() as number;

export function contributorWithToken() {
  const user = createTestUser(getDb(), ["contributor"]);
  return { ...user, token: createToken(getDb(), user.id, "test", { actorId: user.id }).token };
}

/** Uploads `rows` valid rows (lab codes from `prefix`) and answers the upload's public id. */
export async function uploadedSheet(rows: number, prefix: string, token: string): Promise<string> {
  const body = new FormData();
  body.append("file", new Blob([toCsvText(uploadRows(rows, { prefix }))]), `${prefix}.csv`);
  const res = await run(() =>
    uploadsApi.action(
      args(new Request(`${ORIGIN}/api/v1/uploads`, { method: "POST", body, headers: { Authorization: `Bearer ${token}` } })),
    ),
  );
  expect(res.status).toBe(200);
  expect((res.data as { valid: number }).valid).toBe(rows);
  return (res.data as { upload_id: string }).upload_id;
}

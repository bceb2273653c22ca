import type { Role } from "#app/db/schema.ts";
import { getDb } from "#app/db/client.server.ts";
import { userForToken } from "#app/models/accounts/tokens.server.ts";
import { json } from "#app/utils/http.server.ts";

function apiError(status: 401 | 403, message: string): never {
  const headers: HeadersInit =
    status === 401 ? { "WWW-Authenticate": 'Bearer realm="thawline"', "Cache-Control": "no-store" } : {};
  throw json({ error: message }, { status, headers });
}

function bearerToken(request: Request): string | null {
  const header = request.headers.get("Authorization");
  const match = header?.match(/^Bearer\s+(\S+)\s*$/i);
  return match ? match[1]! : null;
}

/** First line of every /api/v1 loader or action that needs a person: a valid personal token, or 401 JSON. */
export async function requireApiUser(request: Request) {
  const token = bearerToken(request);
  if (!token) apiError(401, "Send a personal API token as 'Authorization: Bearer <token>'.");
  const user = userForToken(getDb(), token);
  if (!user) apiError(401, "This token is not valid: it may have been revoked, or its owner deactivated.");
  return user;
}

/** Like requireApiUser, and the person must hold one of the roles (403 JSON otherwise). */
export async function requireApiRole(request: Request, ...allowed: Role[]) {
  const user = await requireApiUser(request);
  if (!allowed.some((r) => user.roles.includes(r))) {
    apiError(403, `This needs one of the roles: ${allowed.join(", ")}.`);
  }
  return user;
}

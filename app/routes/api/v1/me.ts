import type { Route } from "./+types/me";
import { requireApiUser } from "#app/auth/api.server.ts";
import { json } from "#app/utils/http.server.ts";

export async function loader({ request }: Route.LoaderArgs) {
  // Any valid personal API token; 401 JSON otherwise.
  const user = await requireApiUser(request);
  return json({ email: user.email, roles: user.roles }, { headers: { "Cache-Control": "no-store" } });
}

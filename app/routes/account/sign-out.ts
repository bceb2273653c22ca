import { redirect } from "react-router";
import type { Route } from "./+types/sign-out";
import { getDb } from "#app/db/client.server.ts";
import { writeWhenFree } from "#app/db/write-when-free.server.ts";
import { clientAddress, destroySession, getOptionalUser } from "#app/auth/session.server.ts";
import { audit } from "#app/models/audit.server.ts";
import { redirectWithFlash } from "#app/utils/flash.server.ts";

export async function loader(_: Route.LoaderArgs) {
  // Public: signing out is a POST; a visit here changes nothing.
  return redirect("/");
}

export async function action({ request }: Route.ActionArgs) {
  // Public action: ends whatever session this browser holds (none is fine).
  const user = await getOptionalUser(request);
  const cookie = await destroySession(request);
  if (user) {
    const db = getDb();
    await writeWhenFree(db, () =>
      audit(db, { actorId: user.id, action: "auth.sign_out", entity: "user", entityId: user.id, ip: clientAddress(request) }),
    );
  }
  return redirectWithFlash("/", { kind: "info", message: "You are signed out." }, { headers: { "Set-Cookie": cookie } });
}

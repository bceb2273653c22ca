import { Outlet } from "react-router";
import type { Route } from "./+types/layout";
import { requireUser } from "#app/auth/session.server.ts";
import { ErrorView } from "#app/components/error-view.tsx";

/** The account page is for signed-in people; sign-in and sign-out sit outside this layout. Each page's loader and action still make their own check; this one guards the area as a whole. */
export async function loader({ request }: Route.LoaderArgs) {
  await requireUser(request);
  return null;
}

export default function AccountLayout() {
  return <Outlet />;
}

export function ErrorBoundary({ error }: Route.ErrorBoundaryProps) {
  return <ErrorView error={error} />;
}

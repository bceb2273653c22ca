import { Outlet } from "react-router";
import type { Route } from "./+types/layout";
import { requireUser } from "#app/auth/session.server.ts";
import { ErrorView } from "#app/components/error-view.tsx";

/** Reading the registry (Explore, determination and site pages, the map) is for signed-in people. Each page's loader and action still make their own check; this one guards the area as a whole. */
export async function loader({ request }: Route.LoaderArgs) {
  await requireUser(request);
  return null;
}

export default function ExploreLayout() {
  return <Outlet />;
}

export function ErrorBoundary({ error }: Route.ErrorBoundaryProps) {
  return <ErrorView error={error} />;
}

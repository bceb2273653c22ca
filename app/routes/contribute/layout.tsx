import { Outlet } from "react-router";
import type { Route } from "./+types/layout";
import { requireRole } from "#app/auth/session.server.ts";
import { ErrorView } from "#app/components/error-view.tsx";

/** Submitting and uploading is for contributors. Each page's loader and action still make their own check; this one guards the area as a whole. */
export async function loader({ request }: Route.LoaderArgs) {
  await requireRole(request, "contributor");
  return null;
}

export default function ContributeLayout() {
  return <Outlet />;
}

export function ErrorBoundary({ error }: Route.ErrorBoundaryProps) {
  return <ErrorView error={error} />;
}

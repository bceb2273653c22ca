import { Outlet } from "react-router";
import type { Route } from "./+types/layout";
import { requireRole } from "#app/auth/session.server.ts";
import { ErrorView } from "#app/components/error-view.tsx";

/** People and curves are for editors. Each page's loader and action still make their own check; this one guards the area as a whole. */
export async function loader({ request }: Route.LoaderArgs) {
  await requireRole(request, "editor");
  return null;
}

export default function AdminLayout() {
  return <Outlet />;
}

export function ErrorBoundary({ error }: Route.ErrorBoundaryProps) {
  return <ErrorView error={error} />;
}

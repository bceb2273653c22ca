import { Outlet } from "react-router";
import type { Route } from "./+types/layout";
import { requireRole } from "#app/auth/session.server.ts";
import { ErrorView } from "#app/components/error-view.tsx";

/** The review area is for reviewers. Each page's loader and action still make their own check. */
export async function loader({ request }: Route.LoaderArgs) {
  await requireRole(request, "reviewer");
  return null;
}

export default function ReviewLayout() {
  return <Outlet />;
}

export function ErrorBoundary({ error }: Route.ErrorBoundaryProps) {
  return <ErrorView error={error} />;
}

import { Outlet } from "react-router";
import type { Route } from "./+types/layout";
import { requireRole } from "#app/auth/session.server.ts";
import { ErrorView } from "#app/components/error-view.tsx";

/** Scoring model runs is for modellers. Each page's loader and action still make their own check. */
export async function loader({ request }: Route.LoaderArgs) {
  await requireRole(request, "modeller");
  return null;
}

export default function RunsLayout() {
  return <Outlet />;
}

export function ErrorBoundary({ error }: Route.ErrorBoundaryProps) {
  return <ErrorView error={error} />;
}

import { Outlet } from "react-router";
import type { Route } from "./+types/layout";
import { requireUser } from "#app/auth/session.server.ts";
import { ErrorView } from "#app/components/error-view.tsx";

/** Constraint sets: everyone signed in may look and download; saving is for modellers, publishing for editors (each action checks). */
export async function loader({ request }: Route.LoaderArgs) {
  await requireUser(request);
  return null;
}

export default function ConstraintsLayout() {
  return <Outlet />;
}

export function ErrorBoundary({ error }: Route.ErrorBoundaryProps) {
  return <ErrorView error={error} />;
}

import { Outlet } from "react-router";
import { ErrorView } from "#app/components/error-view.tsx";

// Releases are open data: signed-out visitors read and download them (PRODUCT.md), so this area has
// no role check; publishing happens on /constraints and through the API, which check for editors.
export default function ReleasesLayout() {
  return <Outlet />;
}

export function ErrorBoundary({ error }: { error: unknown }) {
  return <ErrorView error={error} />;
}

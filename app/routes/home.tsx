import { Link } from "react-router";
import type { Route } from "./+types/home";
import { ErrorView } from "#app/components/error-view.tsx";
import { getOptionalUser } from "#app/auth/session.server.ts";
import { registryTotals } from "#app/models/registry/stats.server.ts";

export async function loader({ request }: Route.LoaderArgs) {
  // Public page: anyone may read the registry's headline totals.
  const user = await getOptionalUser(request);
  return { totals: registryTotals(), signedIn: !!user };
}

export default function Home({ loaderData }: Route.ComponentProps) {
  const { totals, signedIn } = loaderData;
  return (
    <div className="grid gap-12 lg:grid-cols-[3fr_2fr]">
      <section>
        <p className="text-sm tracking-widest text-muted uppercase">A registry of ice-free dates</p>
        <h1 className="mt-3 text-4xl leading-tight">Where and when the land came out from under the ice.</h1>
        <p className="mt-6 max-w-2xl text-lg">
          Thawline gathers radiocarbon and luminescence ages that constrain past ice sheets, calibrates them on the current
          curves, checks them against one another, and lets expert reviewers grade their reliability. Modellers take away
          filtered, versioned, citable sets of constraints.
        </p>
        <div className="mt-8 flex flex-wrap gap-3">
          {signedIn ? (
            <>
              <Link to="/explore" className="btn">
                Explore determinations
              </Link>
              <Link to="/map" className="btn-quiet">
                Open the map
              </Link>
            </>
          ) : (
            <Link to="/sign-in" className="btn">
              Sign in
            </Link>
          )}
        </div>
      </section>
      <aside className="card self-start" aria-labelledby="totals-heading">
        <h2 id="totals-heading">In the registry</h2>
        <dl className="mt-4 grid grid-cols-2 gap-x-6 gap-y-4">
          <Stat label="Determinations" value={totals.determinations} />
          <Stat label="Sites" value={totals.sites} />
          <Stat label="Radiocarbon" value={totals.radiocarbon} />
          <Stat label="Luminescence" value={totals.luminescence} />
          <Stat label="Graded" value={totals.graded} />
          <Stat label="Labs" value={totals.labs} />
        </dl>
      </aside>
    </div>
  );
}

function Stat({ label, value }: { label: string; value: number }) {
  return (
    <div>
      <dt className="text-sm text-muted">{label}</dt>
      <dd className="text-2xl font-semibold">{value.toLocaleString("en")}</dd>
    </div>
  );
}

export function ErrorBoundary({ error }: Route.ErrorBoundaryProps) {
  return <ErrorView error={error} />;
}
